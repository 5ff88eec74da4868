package lineage

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"math"
	"sort"
	"time"
)

// Record is one row of the ledger: one chain used by one estimate.
type Record struct {
	EstimateID   string    `json:"estimate_id"`     // content-derived id of the estimate (see EstimateID)
	EstimatePath string    `json:"estimate_path"`   // the estimate's file, relative to the ledger's folder (RelPath)
	Pipeline     string    `json:"pipeline"`        // name of the pipeline that ran it
	Stage        string    `json:"stage"`           // stage name from its Description
	StageVersion string    `json:"stage_version"`   // stage version from its Description
	Model        string    `json:"model"`           // model the stage solved
	ChainHash    string    `json:"chain_hash"`      // hash of the chain's numbers
	SpecHash     string    `json:"spec_hash"`       // spec hash of the job that made the chain
	ManifestHash string    `json:"manifest_hash"`   // hash of the manifest the run came from
	ChainPath    string    `json:"chain_path"`      // points file holding the chain, relative to the ledger's folder
	FileHash     string    `json:"file_hash"`       // content hash of ChainPath when the estimate was made
	Process      string    `json:"process"`         // process name within the set
	Point        int       `json:"point"`           // sweep point within the set
	Time         time.Time `json:"time"`            // when the estimate was recorded (UTC, microseconds)
	Numeric      string    `json:"numeric_version"` // numeric version the chain was solved under ("" in version 1 ledgers)
}

// Values is the content of an estimate that enters its id.
type Values struct {
	Scalars map[string]float64
	Vectors map[string][]float64
}

// EstimateID returns the id of an estimate: SHA-256 (hex) over a canonical
// encoding of who computed it (stage name and version), what was asked
// (model and parameters), what it used (chain hashes in order) and what came
// out (scalars and vectors by sorted name). Rerunning the same stage on the
// same chains gives the same id, so repeated rows in the ledger are the same
// estimate recorded again.
//
// Encoding: "gridstage estimate v1\n", then each string as its byte length
// (uint32 little-endian) and bytes, each float64 as its IEEE bits (uint64
// little-endian, NaN canonicalised), counts as uint32.
func EstimateID(stage, version, model string, params map[string]float64, chains []string, v Values) string {
	h := sha256.New()
	var b []byte
	str := func(s string) {
		b = binary.LittleEndian.AppendUint32(b, uint32(len(s)))
		b = append(b, s...)
	}
	num := func(x float64) {
		bits := math.Float64bits(x)
		if math.IsNaN(x) {
			bits = 0x7ff8000000000001
		}
		b = binary.LittleEndian.AppendUint64(b, bits)
	}
	count := func(n int) { b = binary.LittleEndian.AppendUint32(b, uint32(n)) }
	b = append(b, "gridstage estimate v1\n"...)
	str(stage)
	str(version)
	str(model)
	count(len(params))
	for _, k := range sortedKeys(params) {
		str(k)
		num(params[k])
	}
	count(len(chains))
	for _, c := range chains {
		str(c)
	}
	count(len(v.Scalars))
	for _, k := range sortedKeys(v.Scalars) {
		str(k)
		num(v.Scalars[k])
	}
	count(len(v.Vectors))
	for _, k := range sortedKeys(v.Vectors) {
		str(k)
		count(len(v.Vectors[k]))
		for _, x := range v.Vectors[k] {
			num(x)
		}
	}
	h.Write(b)
	return hex.EncodeToString(h.Sum(nil))
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
