// Package batch runs a manifest: it solves every job (or one shard's share)
// on a worker pool, takes solved jobs from the content-addressed cache when
// it has them, streams each process's chains into its output set in job
// order, and writes a run record. It is the engine behind `gridstage run`
// and the grid stage of a pipeline.
//
// Output bytes depend only on the manifest and the shard: workers deliver
// results in job order (package runner), the cache stores chains bit for bit,
// and the run record holds no times.
package batch
