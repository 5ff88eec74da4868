// Command writev1 writes a lineage ledger of layout version 1. It is not
// built with gridstage: generate.sh copies it into a checkout of the last
// commit that wrote version 1 (2c15248^) and runs it there, so the file
// is that version's own encoding. It writes the ledger and the records it
// holds, as JSON with that version's field names, for the test to compare.
package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"gridstage/pipeline/lineage"
)

func main() {
	if len(os.Args) != 3 {
		fmt.Fprintln(os.Stderr, "usage: writev1 LEDGER.parquet RECORDS.json")
		os.Exit(2)
	}
	// Invented hashes: SHA-256 of a label, so they look like the real ones.
	hash := func(label string) string {
		h := sha256.Sum256([]byte(label))
		return hex.EncodeToString(h[:])
	}
	// Version 1 stored absolute paths: a pipeline run in
	// /home/analyst/kessrin, an invented project folder.
	const out = "/home/analyst/kessrin/out"
	when := time.Date(2026, 11, 20, 9, 30, 0, 123456000, time.UTC)
	earnings := lineage.Record{
		Pipeline: "kessrin-pipeline", ChainHash: hash("earnings chain"), SpecHash: hash("earnings spec"),
		ManifestHash: hash("kessrin manifest"), ChainPath: out + "/chains/earnings.points.parquet",
		FileHash: hash("earnings points file"), Process: "earnings", Point: 0,
	}
	productivity := earnings
	productivity.ChainHash, productivity.SpecHash = hash("productivity chain"), hash("productivity spec")
	productivity.ChainPath, productivity.FileHash = out+"/chains/productivity.points.parquet", hash("productivity points file")
	productivity.Process, productivity.Point = "productivity", 2

	var recs []lineage.Record
	add := func(stage, version, model string, params map[string]float64, v lineage.Values, chains ...lineage.Record) {
		var hashes []string
		for _, c := range chains {
			hashes = append(hashes, c.ChainHash)
		}
		id := lineage.EstimateID(stage, version, model, params, hashes, v)
		for i, c := range chains {
			c.EstimateID, c.EstimatePath = id, out+"/estimates/"+id+".json"
			c.Stage, c.StageVersion, c.Model = stage, version, model
			c.Time = when.Add(time.Duration(len(recs)+i) * time.Second)
			recs = append(recs, c)
		}
	}
	add("modelstage", "0.1.0", "savings", map[string]float64{"beta": 0.96, "r": 0.03},
		lineage.Values{Scalars: map[string]float64{"mean_assets": 1.75}}, earnings)
	add("modelstage", "0.1.0", "growth", map[string]float64{"alpha": 0.36, "beta": 0.95},
		lineage.Values{Scalars: map[string]float64{"mean_capital": 0.19}, Vectors: map[string][]float64{"policy": {0.1, 0.2}}},
		productivity, earnings)

	// Append as a pipeline did, in a folder of its own (version 1 also
	// left a lock file beside the ledger).
	dir, err := os.MkdirTemp("", "ledger-v1")
	check(err)
	defer os.RemoveAll(dir)
	check(lineage.Append(filepath.Join(dir, "lineage.parquet"), recs))
	b, err := os.ReadFile(filepath.Join(dir, "lineage.parquet"))
	check(err)
	check(os.WriteFile(os.Args[1], b, 0o644))
	j, err := json.MarshalIndent(recs, "", "  ")
	check(err)
	check(os.WriteFile(os.Args[2], append(j, '\n'), 0o644))
}

func check(err error) {
	if err != nil {
		fmt.Fprintln(os.Stderr, "writev1:", err)
		os.Exit(1)
	}
}
