// Independent reader check for swellgrid Parquet files, using DuckDB through
// the npm package @duckdb/node-api (version recorded in the output).
//
// Usage: DUCKDB_NODE_API=<dir of node_modules/@duckdb/node-api> node read_parquet.js FILE.parquet ...
// Prints one JSON object: {duckdb_version, files: {path: {columns, rows, kv,
// nulls, row_groups, compression, stats}}}.
'use strict';
const { DuckDBInstance } = require(process.env.DUCKDB_NODE_API);
const api = require(process.env.DUCKDB_NODE_API + '/package.json');

function q(s) { return "'" + s.replace(/'/g, "''") + "'"; }
function ident(s) { return '"' + s.replace(/"/g, '""') + '"'; }

(async () => {
  const db = await DuckDBInstance.create(':memory:');
  const conn = await db.connect();
  const all = async (sql) => (await conn.runAndReadAll(sql)).getRowObjectsJson();
  const out = { duckdb_node_api: api.version, duckdb_version: (await all('SELECT version() AS v'))[0].v, files: {} };
  for (const f of process.argv.slice(2)) {
    const r = {};
    r.columns = (await all(`DESCRIBE SELECT * FROM read_parquet(${q(f)})`)).map((c) => [c.column_name, c.column_type]);
    r.rows = Number((await all(`SELECT count(*) AS n FROM read_parquet(${q(f)})`))[0].n);
    r.kv = {};
    for (const row of await all(`SELECT decode(key) AS k, decode(value) AS v FROM parquet_kv_metadata(${q(f)})`)) {
      r.kv[row.k] = row.v;
    }
    r.nulls = {};
    for (const [name] of r.columns) {
      const n = await all(`SELECT count(*) FILTER (WHERE ${ident(name)} IS NULL) AS n FROM read_parquet(${q(f)})`);
      r.nulls[name] = Number(n[0].n);
    }
    const meta = await all(`SELECT row_group_id, path_in_schema, compression, stats_min_value, stats_max_value, stats_null_count FROM parquet_metadata(${q(f)})`);
    r.row_groups = new Set(meta.map((m) => m.row_group_id)).size;
    r.compression = [...new Set(meta.map((m) => m.compression))];
    r.stats = {};
    for (const m of meta) {
      if (Number(m.row_group_id) !== 0) continue;
      r.stats[m.path_in_schema] = { min: m.stats_min_value, max: m.stats_max_value, nulls: m.stats_null_count === null ? null : Number(m.stats_null_count) };
    }
    r.first = (await all(`SELECT * EXCLUDE (geometry) FROM read_parquet(${q(f)}) LIMIT 3`).catch(async () => all(`SELECT * FROM read_parquet(${q(f)}) LIMIT 3`)));
    if (r.columns.some(([n]) => n === 'geometry')) {
      // DuckDB >= 1.5 reads the GeoParquet column as GEOMETRY (decoding the WKB
      // itself); older versions see a BLOB.
      try {
        r.geometry_wkt = (await all(`SELECT ST_AsText(geometry) AS w FROM read_parquet(${q(f)}) LIMIT 3`)).map((x) => x.w);
      } catch (e) {
        r.geometry_hex = (await all(`SELECT hex(geometry) AS h FROM read_parquet(${q(f)}) LIMIT 3`)).map((x) => x.h);
      }
    }
    out.files[f] = r;
  }
  process.stdout.write(JSON.stringify(out) + '\n');
})().catch((e) => { console.error(e); process.exit(1); });
