// Reads a gridstage output folder and the plain-array export of it
// (gridstage arrays) with DuckDB (@duckdb/node-api): the Parquet tables and
// the wide CSV tables. For each process it prints, per sweep point and
// age, the grid, transition matrix, stationary and initial distributions,
// matched counts, conditional moments and the baseline chain as DuckDB
// returns them from each source, every float as the hex of its IEEE 754
// bits so that the caller can compare them exactly.
//
// Usage: node arrays.mjs OUT_DIR EXPORT_DIR PROCESS...
//   (EXPORT_DIR/<process>/*.csv are the CSV tables of the export)

import { DuckDBInstance } from '@duckdb/node-api';

const buf = Buffer.alloc(8);
function hex(v) {
  if (v === null || v === undefined) return null;
  buf.writeDoubleLE(Number(v));
  return buf.readBigUInt64LE().toString(16).padStart(16, '0');
}

function sql(s) {
  return "'" + s.replaceAll("'", "''") + "'";
}

async function rows(conn, query) {
  const r = await conn.runAndReadAll(query);
  return r.getRowObjects();
}

// chainOf returns the entry of (point, age), creating it.
function chainOf(chains, point, age) {
  const key = `${Number(point)}/${Number(age)}`;
  if (!chains[key]) {
    chains[key] = {
      grid: [], transition: [], stationary: [], initial: [], matched: [],
      bgrid: [], btransition: [], bstationary: [], mchain: [], mtrue: [], bmchain: [], bmtrue: [],
    };
  }
  return chains[key];
}

function levels(row, dim) {
  const out = [];
  for (let k = 0; k < dim; k++) out.push(hex(row[`x${k}`]));
  return out;
}

const momentNames = ['mean', 'variance', 'skewness', 'kurtosis'];
function moments(row) {
  return {
    chain: momentNames.map((m) => hex(row[`chain_${m}`])),
    truth: momentNames.map((m) => hex(row[`true_${m}`])),
  };
}

async function fromParquet(conn, dir, process) {
  const pq = (t) => `read_parquet(${sql(`${dir}/${process}.${t}.parquet`)})`;
  const meta = await rows(conn, `SELECT decode(value) AS v FROM parquet_kv_metadata(${sql(`${dir}/${process}.points.parquet`)}) WHERE decode(key) = 'gridstage.dim'`);
  const dim = Number(meta[0].v);
  const points = (await rows(conn, `SELECT * FROM ${pq('points')} ORDER BY point`)).map((r) => {
    const params = {};
    for (const [k, v] of Object.entries(r)) if (k.startsWith('param_')) params[k.slice(6)] = hex(v);
    return { point: Number(r.point), ages: Number(r.ages), spec_hash: r.spec_hash, chain_hash: r.chain_hash, params };
  });
  const chains = {};
  for (const r of await rows(conn, `SELECT * FROM ${pq('states')} ORDER BY point, age, state`)) {
    const c = chainOf(chains, r.point, r.age);
    c.grid.push(...levels(r, dim));
    c.stationary.push(hex(r.stationary));
    c.initial.push(hex(r.initial));
    c.matched.push(Number(r.matched));
  }
  for (const [table, field] of [['transitions', 'transition'], ['baseline', 'btransition']]) {
    for (const r of await rows(conn, `SELECT point, age, probability FROM ${pq(table)} ORDER BY point, age, from_state, to_state`)) {
      chainOf(chains, r.point, r.age)[field].push(hex(r.probability));
    }
  }
  for (const r of await rows(conn, `SELECT * FROM ${pq('diagnostics')} ORDER BY point, age, baseline, state`)) {
    const c = chainOf(chains, r.point, r.age);
    const m = moments(r);
    if (r.baseline) {
      c.bgrid.push(...levels(r, dim));
      c.bstationary.push(hex(r.stationary));
      c.bmchain.push(...m.chain);
      c.bmtrue.push(...m.truth);
    } else {
      c.mchain.push(...m.chain);
      c.mtrue.push(...m.truth);
    }
  }
  return { dim, points, chains };
}

// csvTable reads one CSV table as text and casts every column but the
// named text columns to DOUBLE in DuckDB, so that DuckDB's own decimal
// parser turns the digits into floats.
async function csvTable(conn, path, text, order) {
  const src = `read_csv(${sql(path)}, header = true, all_varchar = true)`;
  const cols = (await rows(conn, `DESCRIBE SELECT * FROM ${src}`)).map((r) => r.column_name);
  const select = cols.map((c) => (text.includes(c) ? `"${c}"` : `CAST("${c}" AS DOUBLE) AS "${c}"`)).join(', ');
  return { cols, rows: await rows(conn, `SELECT ${select} FROM ${src} ORDER BY ${order}`) };
}

async function fromCSV(conn, dir, process, dim) {
  const at = (name) => `${dir}/${process}/${name}.csv`;
  const pts = await csvTable(conn, at('points'), ['spec_hash', 'chain_hash'], 'point');
  const points = pts.rows.map((r) => {
    const params = {};
    for (const [k, v] of Object.entries(r)) if (k.startsWith('param_')) params[k.slice(6)] = hex(v);
    return { point: Number(r.point), ages: Number(r.ages), spec_hash: r.spec_hash, chain_hash: r.chain_hash, params };
  });
  const chains = {};
  for (const r of (await csvTable(conn, at('states'), [], 'point, age, state')).rows) {
    const c = chainOf(chains, r.point, r.age);
    c.grid.push(...levels(r, dim));
    c.stationary.push(hex(r.stationary));
    c.initial.push(hex(r.initial));
    c.matched.push(Number(r.matched));
  }
  for (const r of (await csvTable(conn, at('baseline_states'), [], 'point, age, state')).rows) {
    const c = chainOf(chains, r.point, r.age);
    c.bgrid.push(...levels(r, dim));
    c.bstationary.push(hex(r.stationary));
  }
  for (const [name, field] of [['transition', 'transition'], ['baseline_transition', 'btransition']]) {
    const t = await csvTable(conn, at(name), [], 'point, age, from_state');
    const to = t.cols.filter((c) => /^to[0-9]+$/.test(c));
    for (const r of t.rows) {
      const c = chainOf(chains, r.point, r.age);
      // A row of a chain with fewer states than the widest ends in nulls.
      for (const col of to) if (r[col] !== null) c[field].push(hex(r[col]));
    }
  }
  for (const r of (await csvTable(conn, at('moments'), ['baseline'], 'point, age, baseline, state')).rows) {
    const c = chainOf(chains, r.point, r.age);
    const m = moments(r);
    if (r.baseline === 'true') {
      c.bmchain.push(...m.chain);
      c.bmtrue.push(...m.truth);
    } else {
      c.mchain.push(...m.chain);
      c.mtrue.push(...m.truth);
    }
  }
  return { points, chains };
}

async function main([out, exp, ...processes]) {
  const instance = await DuckDBInstance.create(':memory:');
  const conn = await instance.connect();
  const report = {};
  for (const p of processes) {
    const parquet = await fromParquet(conn, out, p);
    const csv = await fromCSV(conn, exp, p, parquet.dim);
    report[p] = { dim: parquet.dim, parquet: { points: parquet.points, chains: parquet.chains }, csv };
  }
  console.log(JSON.stringify(report));
}

await main(process.argv.slice(2));
