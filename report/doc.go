// Package report reads a gridstage output into memory, judges every chain,
// and writes one self-contained HTML page: provenance, a summary table per
// job, a verdict per chain in words and colour, warnings, and the figures of
// package figures embedded as data URIs. The page loads nothing from
// anywhere: no scripts, no web fonts, no external images.
package report
