// Package pipeline is the pipeline host: it reads a pipeline file, launches
// the grid stage to turn a run manifest into chains, hands the chains by
// reference to downstream stages, writes their estimates, and records in the
// lineage ledger which chain fed which estimate.
//
// Stages are any executables that speak the stage protocol (package
// plugin), or any executables at all under the file contract
// (plugin.FileStage, kind files in the pipeline file). Every call to a
// stage runs under a timeout; a stage that crashes, hangs or answers with
// garbage stops the pipeline with one clear error, and every stage process
// is stopped before Run returns.
package pipeline
