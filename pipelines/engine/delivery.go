package engine

// Repair access and availability of each device with an access rule
// (issue 32): the cells.parquet columns access_wait_<device>_h and
// availability_<device>, and the long table access.parquet (cell x device
// x calendar month). The formulas are stats/delivery's.

import (
	"fmt"
	"math"

	"swellgrid/stats/delivery"
)

// accessRow is one calendar month of one device's repair access at a cell.
type accessRow struct {
	device       string
	month        int     // 1..12
	hours        float64 // covered time of the calendar month over the record, h
	waitH        float64 // mean wait for an access window after a failure in the month, h
	availability float64 // delivery.Availability with that wait
	energyShare  float64 // share of the device's energy produced in the month
}

// deviceAccess is the record's repair access of one device at a cell.
type deviceAccess struct {
	waitH         float64 // mean wait over the record, h
	availability  float64 // energy-weighted availability
	censoredShare float64
}

// accessOf returns device k's access at the cell (ok false: the device
// has no access rule, or the cell no result).
func (e *engine) accessOf(r *cellResult, k int) (deviceAccess, []accessRow, bool) {
	if r == nil || k >= len(e.spec.Devices) {
		return deviceAccess{}, nil, false
	}
	ai := e.spec.AccessIndex()[k]
	if ai < 0 || ai >= len(r.sum.Access) || k >= len(r.sum.Devices) {
		return deviceAccess{}, nil, false
	}
	d := e.spec.Devices[k]
	res := r.sum.Access[ai]
	dev := r.sum.Devices[k]
	rows := make([]accessRow, 12)
	avail := make([]float64, 12)
	energy := make([]float64, 12)
	for m := 0; m < 12; m++ {
		avail[m] = delivery.Availability(d.FailuresPerYear, res.MonthWaitH[m], d.RepairH)
		energy[m] = dev.MonthEnergyShare[m]
		rows[m] = accessRow{device: d.Name, month: m + 1, hours: res.MonthHours[m], waitH: res.MonthWaitH[m], availability: avail[m], energyShare: energy[m]}
	}
	a := deviceAccess{waitH: res.MeanWaitH, censoredShare: res.CensoredShare}
	a.availability = delivery.EnergyWeightedAvailability(avail, energy)
	if math.IsNaN(a.availability) {
		// no energy at all: the time-based availability
		a.availability = delivery.Availability(d.FailuresPerYear, res.MeanWaitH, d.RepairH)
	}
	return a, rows, true
}

// accessRows gives a cell's rows of access.parquet, devices in spec order.
func (e *engine) accessRows(r *cellResult) []accessRow {
	var out []accessRow
	for k := range e.spec.Devices {
		if _, rows, ok := e.accessOf(r, k); ok {
			for _, x := range rows {
				if x.hours > 0 {
					out = append(out, x)
				}
			}
		}
	}
	return out
}

// accessAssumptions states the availability model and each device's
// access rule, for the manifest.
func (e *engine) accessAssumptions() []string {
	var out []string
	for _, d := range e.spec.Devices {
		if !d.HasAccess() {
			continue
		}
		te := ""
		if d.AccessTeS > 0 {
			te = fmt.Sprintf(" and Te below %g s", d.AccessTeS)
		}
		out = append(out, fmt.Sprintf("availability of %s: %g failures per device-year, each stopping it for the wait until Hm0 stays below %g m%s for an unbroken %g h, then the %g h repair; the wait from the cell's own record by duration (failure at a uniformly random instant); availability 1 - failures x (wait + repair) / 8766 h per calendar month of the failure, weighted by the device's energy in that month (assumed, not from a reliability study: replace the rates with the device's)",
			d.Name, d.FailuresPerYear, d.AccessHm0M, te, d.RepairH, d.RepairH))
	}
	return out
}
