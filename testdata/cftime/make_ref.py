#!/usr/bin/python3
"""Reference CF time decodings for swellgrid's ingest tests.

Made with Debian's python3-cftime (cftime.num2date), the reference
implementation of CF time decoding used by netCDF4-python. Run with Debian's
interpreter: /usr/bin/python3 make_ref.py > cftime_ref.json
"""
import json
import cftime

calendars = ["standard", "gregorian", "proleptic_gregorian", "noleap", "365_day",
             "all_leap", "366_day", "360_day", "julian"]
units = ["hours since 2001-01-01 00:00:00", "days since 1990-1-1", "seconds since 1999-12-31 21:00:00",
         "minutes since 2004-02-28 00:00:00", "hours since 1900-02-27 12:00:00",
         "days since 1582-10-01", "hours since 2000-02-29 06:00:00"]
# values crossing leap days, month ends and year ends
values = [0, 1, 3, 23.5, 24, 47, 59*24, 60*24, 365*24, 366*24, 1461*24, 10000.25, 36524*24, 100000]
cases = []
for cal in calendars:
    for u in units:
        if cal in ("noleap", "365_day", "360_day") and "02-29" in u:
            continue
        if cal == "360_day" and "12-31" in u:
            continue
        for v in values:
            d = cftime.num2date(v, u, calendar=cal)
            cases.append({"calendar": cal, "units": u, "value": v,
                          "date": "%04d-%02d-%02d %02d:%02d:%02d" % (d.year, d.month, d.day, d.hour, d.minute, d.second),
                          "microsecond": d.microsecond})
print(json.dumps({"source": "cftime.num2date, python3-cftime %s (Debian)" % cftime.__version__,
                  "cases": cases}, indent=0))
