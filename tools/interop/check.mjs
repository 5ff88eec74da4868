// Reads gridstage output with general-purpose readers only: Parquet with
// DuckDB (@duckdb/node-api), Arrow IPC with apache-arrow. For every
// transitions and baseline table it checks that each row of each transition matrix —
// each (point, age, from_state) — sums to 1 within 1e-12 and that every
// probability lies in [0, 1]; for every file, that the gridstage metadata
// keys are present and that the content hash recomputed from the values
// (docs/HASHES.md) matches the one in the metadata. For every sensitivities
// table it checks that the derivatives of each transition row and of each
// stationary distribution sum to 0 (both sum to 1 whatever the parameter).
// It prints one JSON report on stdout and exits 1 on the first failed check.
//
// Usage: node check.mjs FILE...   (files ending in .parquet or .arrow)
//        node check.mjs --matrix FILE POINT AGE   (print one matrix)
//        node check.mjs --derivative FILE POINT PARAMETER   (print dP/dθ of age 0)

import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { tableFromIPC } from 'apache-arrow';

// Row sums: the solver normalises each row, so the stored probabilities sum
// to 1 up to float64 rounding (about 1e-15 for the chains checked here);
// DuckDB's fsum and the compensated sum below add them with error near
// 2^-53. 1e-12 is the tolerance gridstage verify uses (RowSumTolerance).
const TOL = 1e-12;

// Derivative sums: each derivative of a row (or of the stationary law) is
// computed as p_j (a_j − Σ p a), so its entries cancel to rounding of their
// magnitudes: |Σ| ≤ 1e-12 (1 + Σ |entry|) leaves a margin of 1e3 over
// float64 rounding for rows of up to a few hundred entries.
const DERIV_TOL = 1e-12;

const REQUIRED_KEYS = [
  'gridstage.format_version', 'gridstage.table', 'gridstage.tool_version', 'gridstage.numeric_version', 'gridstage.run',
  'gridstage.process', 'gridstage.kind', 'gridstage.method', 'gridstage.dim', 'gridstage.params',
  'gridstage.manifest_hash', 'gridstage.points', 'gridstage.rows', 'gridstage.spec_digest',
  'gridstage.content_hash', 'gridstage.metadata_hash',
];

// contentHash recomputes a table's content hash from the values a general
// reader returns, following docs/HASHES.md ("Content hash") — an
// implementation independent of gridstage's Go code. columns: [{name,
// type: 'int32'|'float64'|'bool'|'utf8', get(i)}], get returning null for
// a null.
function contentHash(table, rows, columns) {
  const top = createHash('sha256');
  top.update(`gridstage content hash v1\ntable ${table}\nrows ${rows}\n`);
  for (const col of columns) {
    const h = createHash('sha256');
    const buf = Buffer.alloc(9);
    for (let i = 0; i < rows; i++) {
      const v = col.get(i);
      if (v === null || v === undefined) {
        h.update(Buffer.from([0]));
        continue;
      }
      buf[0] = 1;
      switch (col.type) {
        case 'int32':
          buf.writeInt32LE(v, 1);
          h.update(buf.subarray(0, 5));
          break;
        case 'float64':
          if (Number.isNaN(v)) buf.writeBigUInt64LE(0x7FF8000000000000n, 1);
          else buf.writeDoubleLE(v, 1);
          h.update(buf);
          break;
        case 'bool':
          buf[1] = v ? 1 : 0;
          h.update(buf.subarray(0, 2));
          break;
        case 'utf8': {
          const bytes = Buffer.from(v, 'utf8');
          buf.writeBigUInt64LE(BigInt(bytes.length), 1);
          h.update(buf);
          h.update(bytes);
          break;
        }
        default:
          fail(`${table}: column ${col.name} has type ${col.type}, which has no canonical encoding`);
      }
    }
    top.update(`column ${col.name} ${col.type} ${h.digest('hex')}\n`);
  }
  return top.digest('hex');
}

function checkContentHash(path, table, rows, columns, meta) {
  const got = contentHash(table, rows, columns);
  if (got !== meta['gridstage.content_hash']) {
    fail(`${path}: content hash recomputed here is ${got}, the metadata says ${meta['gridstage.content_hash']}`);
  }
  return got;
}

function fail(msg) {
  console.error('interop check failed: ' + msg);
  process.exit(1);
}

function sqlString(s) {
  return "'" + s.replaceAll("'", "''") + "'";
}

// Tables holding transition matrices in long form (docs/FORMATS.md): the
// chains' own and the baseline method's.
function isMatrixTable(table) {
  return table === 'transitions' || table === 'baseline';
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
  const all = await conn.runAndReadAll(`SELECT * FROM read_parquet(${f})`);
  const duckTypes = { INTEGER: 'int32', DOUBLE: 'float64', BOOLEAN: 'bool', VARCHAR: 'utf8' };
  const names = all.columnNames();
  const types = all.columnTypes();
  const data = all.getColumns();
  const columns = names.map((name, k) => ({ name, type: duckTypes[types[k].toString()] ?? types[k].toString(), get: (i) => data[k][i] }));
  const report = { path, format: 'parquet', table: meta['gridstage.table'], rows: all.currentRowCount, metadata: meta };
  if (isMatrixTable(report.table)) await checkParquetRows(conn, path, f, report);
  if (report.table === 'sensitivities') await checkParquetDerivatives(conn, path, f, report);
  // After the row checks, which name the row, not only the file.
  report.contentHash = checkContentHash(path, report.table, report.rows, columns, meta);
  return report;
}

async function checkParquetRows(conn, path, f, report) {
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
}

// Every derivative of a transition row, and of a stationary distribution,
// sums to zero: the rows and the distribution sum to one for every value
// of the parameter.
async function checkParquetDerivatives(conn, path, f, report) {
  const sums = await conn.runAndReadAll(
    `SELECT point, age, parameter, quantity, state, fsum(derivative) AS total, sum(abs(derivative)) AS size
     FROM read_parquet(${f})
     WHERE quantity = 'transition'
     GROUP BY point, age, parameter, quantity, state
     UNION ALL
     SELECT point, age, parameter, quantity, -1 AS state, fsum(derivative), sum(abs(derivative))
     FROM read_parquet(${f})
     WHERE quantity = 'stationary'
     GROUP BY point, age, parameter, quantity`);
  let worst = 0;
  let n = 0;
  for (const r of sums.getRowObjectsJson()) {
    const err = Math.abs(r.total) / (1 + r.size);
    if (!(err <= DERIV_TOL)) {
      fail(`${path}: point ${r.point}, age ${r.age}, d/d${r.parameter} of the ${r.quantity} (state ${r.state}) sums to ${r.total}, want 0 within ${DERIV_TOL}·(1 + ${r.size})`);
    }
    worst = Math.max(worst, err);
    n++;
  }
  report.derivativeSums = n;
  report.worstDerivativeSum = worst;
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
  const arrowTypes = { Int32: 'int32', Float64: 'float64', Bool: 'bool', Utf8: 'utf8' };
  const columns = table.schema.fields.map((field) => {
    const vec = table.getChild(field.name);
    return { name: field.name, type: arrowTypes[String(field.type)] ?? String(field.type), get: (i) => vec.get(i) };
  });
  if (isMatrixTable(report.table)) checkArrowRows(path, table, report);
  if (report.table === 'sensitivities') checkArrowDerivatives(path, table, report);
  report.contentHash = checkContentHash(path, report.table, report.rows, columns, meta);
  return report;
}

function checkArrowRows(path, table, report) {
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
}

function checkArrowDerivatives(path, table, report) {
  const cols = ['point', 'age', 'parameter', 'quantity', 'state', 'derivative'].map((c) => table.getChild(c));
  const groups = new Map();
  for (let i = 0; i < table.numRows; i++) {
    const [p, a, param, q, s, d] = cols.map((c) => c.get(i));
    if (q === 'grid') continue;
    const key = `${p}/${a}/${param}/${q}/${q === 'transition' ? s : -1}`;
    const g = groups.get(key) ?? { total: 0, comp: 0, size: 0 };
    const t = g.total + d;
    g.comp += Math.abs(g.total) >= Math.abs(d) ? (g.total - t) + d : (d - t) + g.total;
    g.total = t;
    g.size += Math.abs(d);
    groups.set(key, g);
  }
  let worst = 0;
  for (const [key, g] of groups) {
    const err = Math.abs(g.total + g.comp) / (1 + g.size);
    if (!(err <= DERIV_TOL)) fail(`${path}: ${key}: derivatives sum to ${g.total + g.comp}, want 0 within ${DERIV_TOL}·(1 + ${g.size})`);
    worst = Math.max(worst, err);
  }
  report.derivativeSums = groups.size;
  report.worstDerivativeSum = worst;
}

// One derivative dP/dθ of age 0 as rows, from the sensitivities table alone.
export function derivativeQuery(path, point, parameter) {
  return `SELECT state, list(derivative ORDER BY to_state) AS derivatives
FROM read_parquet(${sqlString(path)})
WHERE point = ${point} AND age = 0 AND parameter = ${sqlString(parameter)} AND quantity = 'transition'
GROUP BY state
ORDER BY state`;
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
  if (args[0] === '--derivative') {
    const [, path, point, parameter] = args;
    const res = await conn.runAndReadAll(derivativeQuery(path, Number(point), parameter));
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
