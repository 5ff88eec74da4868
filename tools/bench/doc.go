// Package bench holds the estimation-scale benchmarks (docs/BENCHMARKS.md,
// "Estimation-scale runs"): sweeps of thousands of AR(1) parameter draws run
// end to end — manifest, worker pool, cache, Parquet — as an estimation's
// outer loop would run them.
package bench
