// Rewrites a table file with a general-purpose writer, as a user's own
// pipeline might: Parquet through DuckDB's COPY (which keeps the values
// and drops the key/value metadata), Arrow IPC through apache-arrow
// (which keeps the schema metadata but encodes the batches its own way).
// gridstage verify must report either copy as a failed check (exit 1).
//
// Usage: node rewrite.mjs SRC DST   (SRC ending in .parquet or .arrow)

import { readFileSync, writeFileSync } from 'node:fs';
import { DuckDBInstance } from '@duckdb/node-api';
import { tableFromIPC, tableToIPC } from 'apache-arrow';

const [src, dst] = process.argv.slice(2);
if (!src || !dst) {
  console.error('usage: node rewrite.mjs SRC DST');
  process.exit(2);
}
if (src.endsWith('.parquet')) {
  const db = await DuckDBInstance.create(':memory:');
  const conn = await db.connect();
  const quote = (p) => "'" + p.replaceAll("'", "''") + "'";
  await conn.run(`COPY (SELECT * FROM read_parquet(${quote(src)})) TO ${quote(dst)} (FORMAT parquet)`);
} else {
  writeFileSync(dst, tableToIPC(tableFromIPC(readFileSync(src)), 'file'));
}
