// Reads gridstage output with general-purpose readers only: Parquet with
// DuckDB (@duckdb/node-api), Arrow IPC with apache-arrow. For every
// transitions table it checks that each row of each transition matrix —
// each (point, age, from_state) — sums to 1 within 1e-12 and that every
// probability lies in [0, 1]; for every file, that the gridstage metadata
// keys are present. It prints one JSON report on stdout and exits 1 on the
// first failed check.
//
// Usage: node check.mjs FILE...   (files ending in .parquet or .arrow)
//        node check.mjs --matrix FILE POINT AGE   (print one matrix)

import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { tableFromIPC } from 'apache-arrow';

// Row sums: the solver normalises each row, so the stored probabilities sum
// to 1 up to float64 rounding (about 1e-15 for the chains checked here);
// DuckDB's fsum and the compensated sum below add them with error near
// 2^-53. 1e-12 is the tolerance gridstage verify uses (RowSumTolerance).
const TOL = 1e-12;

const REQUIRED_KEYS = [
  'gridstage.format_version', 'gridstage.table', 'gridstage.tool_version', 'gridstage.run',
  'gridstage.process', 'gridstage.kind', 'gridstage.method', 'gridstage.dim', 'gridstage.params',
  'gridstage.manifest_hash', 'gridstage.points', 'gridstage.rows', 'gridstage.spec_digest',
  'gridstage.content_hash', 'gridstage.metadata_hash',
];

function fail(msg) {
  console.error('interop check failed: ' + msg);
  process.exit(1);
}

function sqlString(s) {
  return "'" + s.replaceAll("'", "''") + "'";
}

function checkKeys(path, meta) {
  for (const k of REQUIRED_KEYS) {
    if (!(k in meta)) fail(`${path}: metadata key ${k} is missing`);
  }
  if (meta['gridstage.table'] === 'points' && !('gridstage.table_hashes' in meta)) {
    fail(`${path}: metadata key gridstage.table_hashes is missing`);
  }
}

async function checkParquet(conn, path) {
  const f = sqlString(path);
  const kv = await conn.runAndReadAll(
    `SELECT decode(key) AS k, decode(value) AS v FROM parquet_kv_metadata(${f})`);
  const meta = {};
  for (const r of kv.getRowObjectsJson()) meta[r.k] = r.v;
  checkKeys(path, meta);
  const n = await conn.runAndReadAll(`SELECT count(*)::INTEGER AS n FROM read_parquet(${f})`);
  const report = { path, format: 'parquet', table: meta['gridstage.table'], rows: n.getRowObjectsJson()[0].n, metadata: meta };
  if (report.table !== 'transitions') return report;

  const bad = await conn.runAndReadAll(
    `SELECT point, age, from_state, to_state, probability FROM read_parquet(${f})
     WHERE NOT (probability >= 0 AND probability <= 1) LIMIT 1`);
  for (const r of bad.getRowObjectsJson()) {
    fail(`${path}: point ${r.point}, age ${r.age}, from_state ${r.from_state}, to_state ${r.to_state}: probability ${r.probability} is not in [0, 1]`);
  }
  const sums = await conn.runAndReadAll(
    `SELECT point, age, from_state, fsum(probability) AS total, count(*)::INTEGER AS width
     FROM read_parquet(${f}) GROUP BY point, age, from_state ORDER BY point, age, from_state`);
  summarizeRows(path, report, sums.getRowObjectsJson());
  return report;
}

function summarizeRows(path, report, rows) {
  let worst = 0;
  for (const r of rows) {
    const err = Math.abs(r.total - 1);
    if (!(err <= TOL)) {
      fail(`${path}: point ${r.point}, age ${r.age}, from_state ${r.from_state}: row sums to ${r.total}, want 1 within ${TOL}`);
    }
    worst = Math.max(worst, err);
  }
  report.transitionRows = rows.length;
  report.worstRowSumError = worst;
}

function checkArrow(path) {
  const table = tableFromIPC(readFileSync(path));
  const meta = Object.fromEntries(table.schema.metadata);
  checkKeys(path, meta);
  const report = { path, format: 'arrow', table: meta['gridstage.table'], rows: table.numRows, metadata: meta };
  if (report.table !== 'transitions') return report;

  const point = table.getChild('point').toArray();
  const age = table.getChild('age').toArray();
  const from = table.getChild('from_state').toArray();
  const prob = table.getChild('probability').toArray();
  const rows = [];
  let cur = null;
  for (let i = 0; i < table.numRows; i++) {
    const p = prob[i];
    if (!(p >= 0 && p <= 1)) fail(`${path}: row ${i}: probability ${p} is not in [0, 1]`);
    if (!cur || cur.point !== point[i] || cur.age !== age[i] || cur.from_state !== from[i]) {
      cur = { point: point[i], age: age[i], from_state: from[i], total: 0, comp: 0 };
      rows.push(cur);
    }
    // Neumaier's compensated summation.
    const t = cur.total + p;
    cur.comp += Math.abs(cur.total) >= p ? (cur.total - t) + p : (p - t) + cur.total;
    cur.total = t;
  }
  for (const r of rows) r.total += r.comp;
  summarizeRows(path, report, rows);
  return report;
}

// The query the README shows: one transition matrix as rows of
// probabilities, with the level of each from-state.
export function matrixQuery(folder, process, point, age) {
  return `SELECT t.from_state, s.x0 AS level, list(t.probability ORDER BY t.to_state) AS probabilities
FROM read_parquet('${folder}/${process}.transitions.parquet') AS t
JOIN read_parquet('${folder}/${process}.states.parquet') AS s
  ON s.point = t.point AND s.age = t.age AND s.state = t.from_state
WHERE t.point = ${point} AND t.age = ${age}
GROUP BY t.from_state, s.x0
ORDER BY t.from_state`;
}

async function main(args) {
  const instance = await DuckDBInstance.create(':memory:');
  const conn = await instance.connect();
  if (args[0] === '--matrix') {
    const [, path, point, age] = args;
    const folder = path.slice(0, path.length - basename(path).length - 1) || '.';
    const process = basename(path).replace(/\.transitions\.parquet$/, '');
    const res = await conn.runAndReadAll(matrixQuery(folder, process, Number(point), Number(age)));
    console.log(JSON.stringify(res.getRowObjectsJson()));
    return;
  }
  if (args.length === 0) fail('no files given');
  const files = [];
  for (const path of args) {
    if (path.endsWith('.parquet')) files.push(await checkParquet(conn, path));
    else if (path.endsWith('.arrow')) files.push(checkArrow(path));
    else fail(`${path}: not a .parquet or .arrow file`);
  }
  console.log(JSON.stringify({ files }));
}

await main(process.argv.slice(2));
