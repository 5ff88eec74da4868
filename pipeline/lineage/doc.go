// Package lineage keeps the lineage ledger: a Parquet file with one row per
// (estimate, chain used), recording which stage produced the estimate, the
// chain's hashes, where the chain lives, and when. It answers two audit
// questions — which chains fed estimate X, and which estimates used chain
// H — and lets a caller re-verify the chain files an answer names.
//
// Appends are atomic: the whole ledger is rewritten to a temporary file in
// the same folder, fsynced and renamed over the old one, under an exclusive
// lock, so a crash at any moment leaves either the old ledger or the new
// one, never a half-written file, and two pipelines appending at once do
// not lose each other's rows. Rewriting costs time proportional to the
// ledger's size, which is small next to the solves it records.
package lineage
