// Package formats writes and reads gridstage outputs: Markov chains, their
// diagnostics and their provenance, as Parquet (default) or Arrow IPC files
// that any Arrow or Parquet reader can use without gridstage code.
//
// One Set — one process across the points of a sweep, each point possibly
// with one chain per age — lands in six files in one folder:
//
//	<process>.points.<ext>       one row per sweep point: spec hash, chain hash, canonical spec, swept values
//	<process>.transitions.<ext>  one row per (point, age, from_state, to_state): the probability
//	<process>.baseline.<ext>     the same for the baseline method's chain, when the run compared one
//	<process>.states.<ext>       one row per (point, age, state): grid levels, stationary and initial probability
//	<process>.diagnostics.<ext>  one row per (point, age, chain, state): conditional moments and their errors
//	<process>.summary.<ext>      one row per (point, age, chain): unconditional moments and worst errors
//
// Every file carries key/value metadata (see the Key constants) including a
// content hash: SHA-256 over a canonical encoding of the values in the
// file's columns, documented in docs/HASHES.md, so that the hash survives
// re-encoding and Verify can recompute it.
//
// Records are streamed: a Writer takes one Record at a time and writes row
// groups (record batches) as its buffers fill, so memory stays bounded
// whatever the number of points. Files are written under temporary names,
// fsynced and renamed into place only on Close; the points file is renamed
// last and lists the content hashes of its siblings.
//
// The column layout is documented in docs/FORMATS.md.
package formats
