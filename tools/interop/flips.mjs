// Reads damaged copies of gridstage files with general-purpose readers
// only — Parquet with DuckDB (@duckdb/node-api), Arrow IPC with
// apache-arrow — and reports every copy that does not read as the very
// same column names, types, values, row count and key/value metadata as
// its original. A copy the reader rejects counts as differing too: the
// caller sends only copies that gridstage verify accepted.
//
// Usage: node flips.mjs LIST.json
//   LIST.json: {"pairs": [{"original": PATH, "damaged": [PATH, ...]}, ...]}
// Prints {"checked": N, "differ": [{"path": PATH, "reason": TEXT}, ...]}.

import { readFileSync } from 'node:fs';
import { DuckDBInstance } from '@duckdb/node-api';
import { tableFromIPC } from 'apache-arrow';

function sqlString(s) {
  return "'" + s.replaceAll("'", "''") + "'";
}

// Everything a reader of the file sees, as one comparable string.
async function readParquet(conn, path) {
  const f = sqlString(path);
  const kv = await conn.runAndReadAll(
    `SELECT decode(key) AS k, decode(value) AS v FROM parquet_kv_metadata(${f}) ORDER BY k`);
  const all = await conn.runAndReadAll(`SELECT * FROM read_parquet(${f})`);
  const count = await conn.runAndReadAll(`SELECT count(*)::BIGINT AS n FROM read_parquet(${f})`);
  return JSON.stringify({
    names: all.columnNames(),
    types: all.columnTypes().map(String),
    rows: all.getRowsJson(),
    count: count.getRowsJson(),
    meta: kv.getRowsJson(),
  });
}

function readArrow(path) {
  const table = tableFromIPC(readFileSync(path));
  const cols = table.schema.fields.map((field) => {
    const vec = table.getChild(field.name);
    const vals = [];
    for (let i = 0; i < table.numRows; i++) {
      const v = vec.get(i);
      vals.push(typeof v === 'bigint' ? v.toString() + 'n' : Number.isNaN(v) ? 'NaN' : v);
    }
    return { name: field.name, type: String(field.type), nullable: field.nullable, vals };
  });
  return JSON.stringify({ rows: table.numRows, cols, meta: [...table.schema.metadata].sort() });
}

async function read(conn, path) {
  return path.endsWith('.arrow') ? readArrow(path) : readParquet(conn, path);
}

async function main(listPath) {
  const list = JSON.parse(readFileSync(listPath, 'utf8'));
  const instance = await DuckDBInstance.create(':memory:');
  const conn = await instance.connect();
  const differ = [];
  let checked = 0;
  for (const pair of list.pairs) {
    const want = await read(conn, pair.original);
    for (const path of pair.damaged ?? []) {
      checked++;
      let got;
      try {
        got = await read(conn, path);
      } catch (e) {
        differ.push({ path, reason: 'the reader rejects it: ' + String(e.message ?? e).split('\n')[0].slice(0, 200) });
        continue;
      }
      if (got !== want) {
        let i = 0;
        while (i < got.length && got[i] === want[i]) i++;
        differ.push({ path, reason: `reads differently from the original near: ${want.slice(Math.max(0, i - 60), i + 40)} / ${got.slice(Math.max(0, i - 60), i + 40)}` });
      }
    }
  }
  console.log(JSON.stringify({ checked, differ }));
}

await main(process.argv[2]);
