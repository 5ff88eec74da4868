package formats

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// FormatVersion is the version of the layout described in docs/FORMATS.md.
// It changes whenever a column or metadata key changes meaning. Version 2
// added the vector columns of the diagnostics and summary tables; version 3
// the numeric version (KeyNumeric), which verify checks every spec hash
// against; version 4 the baseline table (the comparison method's
// transition matrices); version 5 the row-shape and degenerate columns,
// and nulls with a reason (null_reasons) where a moment or an error has
// no finite value.
const FormatVersion = "5"

// Key/value metadata keys carried by every file (Parquet key/value
// metadata; Arrow IPC schema metadata).
const (
	KeyFormatVersion = "gridstage.format_version"  // FormatVersion
	KeyTable         = "gridstage.table"           // points, transitions, baseline, states, diagnostics or summary
	KeyTool          = "gridstage.tool_version"    // gridstage version that wrote the file
	KeyNumeric       = "gridstage.numeric_version" // numeric version the chains were solved under
	KeyRun           = "gridstage.run"             // run name
	KeyProcess       = "gridstage.process"         // process name
	KeyKind          = "gridstage.kind"            // process kind
	KeyMethod        = "gridstage.method"          // discretization method of the primary chains
	KeyDim           = "gridstage.dim"             // state dimension, decimal
	KeyParams        = "gridstage.params"          // JSON array of swept parameter names, sorted
	KeyManifestHash  = "gridstage.manifest_hash"   // manifest hash (may be empty)
	KeyPoints        = "gridstage.points"          // number of sweep points, decimal
	KeyRows          = "gridstage.rows"            // rows in this file, decimal
	KeySpecDigest    = "gridstage.spec_digest"     // digest of the per-point spec hashes (docs/HASHES.md)
	KeyContentHash   = "gridstage.content_hash"    // content hash of this file's table (docs/HASHES.md)

	// KeySpecHash and KeySpec are present when the set has exactly one
	// point: its spec hash and canonical spec. For sweeps, the per-point
	// values are the spec_hash and spec columns of the points table.
	KeySpecHash = "gridstage.spec_hash"
	KeySpec     = "gridstage.spec"

	// KeyMetadataHash is SHA-256 over every other gridstage.* key and its
	// value (docs/HASHES.md, "Metadata hash"), so that a change to any of
	// them is detected.
	KeyMetadataHash = "gridstage.metadata_hash"

	// KeyTableHashes, in the points file only, is a JSON object mapping each
	// sibling table name to its content hash, binding the set's files
	// together.
	KeyTableHashes = "gridstage.table_hashes"

	// KeySensitivities is "true" in every file of a set that has the
	// sensitivities table, and absent otherwise.
	KeySensitivities = "gridstage.sensitivities"
)

// requiredKeys are present in every file.
var requiredKeys = []string{KeyFormatVersion, KeyTable, KeyTool, KeyNumeric, KeyRun, KeyProcess, KeyKind, KeyMethod,
	KeyDim, KeyParams, KeyManifestHash, KeyPoints, KeyRows, KeySpecDigest, KeyContentHash, KeyMetadataHash}

// metadataHash returns SHA-256 over the gridstage.* keys of m other than
// KeyMetadataHash, in byte order of the keys: for each, the key's length as
// 8 bytes little-endian, the key, the value's length likewise, the value.
func metadataHash(m map[string]string) string {
	h := sha256.New()
	var n [8]byte
	for _, k := range sortedKeys(m) {
		if !strings.HasPrefix(k, "gridstage.") || k == KeyMetadataHash {
			continue
		}
		for _, s := range []string{k, m[k]} {
			binary.LittleEndian.PutUint64(n[:], uint64(len(s)))
			h.Write(n[:])
			h.Write([]byte(s))
		}
	}
	return hex.EncodeToString(h.Sum(nil))
}

// fileMeta is the parsed metadata of one file.
type fileMeta struct {
	raw         map[string]string
	table       string
	header      Header
	points      int
	rows        int64
	specDigest  string
	contentHash string
	specHash    string
	spec        string
	tableHashes map[string]string
}

// baseMeta returns the metadata shared by every file of a set.
func baseMeta(h Header, points int, specDigest string) map[string]string {
	params, _ := json.Marshal(h.Params)
	if h.Params == nil {
		params = []byte("[]")
	}
	m := map[string]string{
		KeyFormatVersion: FormatVersion,
		KeyTool:          h.Tool,
		KeyNumeric:       h.Numeric,
		KeyRun:           h.Run,
		KeyProcess:       h.Process,
		KeyKind:          h.Kind,
		KeyMethod:        h.Method,
		KeyDim:           strconv.Itoa(h.Dim),
		KeyParams:        string(params),
		KeyManifestHash:  h.ManifestHash,
		KeyPoints:        strconv.Itoa(points),
		KeySpecDigest:    specDigest,
	}
	if h.Sensitivities {
		m[KeySensitivities] = "true"
	}
	return m
}

// MetadataError reports missing or malformed metadata in a file.
type MetadataError struct {
	Path, Key, Problem string
}

func (e *MetadataError) Error() string {
	return fmt.Sprintf("%s: metadata key %s %s", e.Path, e.Key, e.Problem)
}

func isHexHash(s string) bool {
	if len(s) != 64 {
		return false
	}
	_, err := hex.DecodeString(s)
	return err == nil
}

// parseMeta checks that every required key is present and well formed.
func parseMeta(path string, raw map[string]string) (*fileMeta, error) {
	bad := func(key, problem string) error { return &MetadataError{Path: path, Key: key, Problem: problem} }
	for _, k := range requiredKeys {
		if _, ok := raw[k]; !ok {
			return nil, bad(k, "is missing")
		}
	}
	if got := metadataHash(raw); got != raw[KeyMetadataHash] {
		return nil, bad(KeyMetadataHash, fmt.Sprintf("is %s but the gridstage metadata hashes to %s: a metadata value was changed", raw[KeyMetadataHash], got))
	}
	if v := raw[KeyFormatVersion]; v != FormatVersion {
		return nil, bad(KeyFormatVersion, fmt.Sprintf("is %q; this gridstage reads format %s", v, FormatVersion))
	}
	m := &fileMeta{raw: raw, table: raw[KeyTable]}
	if !knownTable(m.table) {
		return nil, bad(KeyTable, fmt.Sprintf("is %q, not a gridstage table", m.table))
	}
	h := &m.header
	h.Tool, h.Numeric, h.Run, h.Process, h.Kind, h.Method, h.ManifestHash =
		raw[KeyTool], raw[KeyNumeric], raw[KeyRun], raw[KeyProcess], raw[KeyKind], raw[KeyMethod], raw[KeyManifestHash]
	for _, k := range []string{KeyTool, KeyNumeric, KeyProcess, KeyKind, KeyMethod} {
		if raw[k] == "" {
			return nil, bad(k, "is empty")
		}
	}
	switch v, ok := raw[KeySensitivities]; {
	case ok && v != "true":
		return nil, bad(KeySensitivities, fmt.Sprintf("is %q, want true or no key", v))
	case !ok && m.table == TableSensitivities:
		return nil, bad(KeySensitivities, "is missing from a sensitivities table")
	}
	h.Sensitivities = raw[KeySensitivities] == "true"
	var err error
	if h.Dim, err = strconv.Atoi(raw[KeyDim]); err != nil || h.Dim < 1 {
		return nil, bad(KeyDim, fmt.Sprintf("is %q, want a positive integer", raw[KeyDim]))
	}
	if err := json.Unmarshal([]byte(raw[KeyParams]), &h.Params); err != nil || h.Params == nil {
		return nil, bad(KeyParams, fmt.Sprintf("is %q, want a JSON array of names", raw[KeyParams]))
	}
	if !sort.StringsAreSorted(h.Params) {
		return nil, bad(KeyParams, "is not sorted")
	}
	if m.points, err = strconv.Atoi(raw[KeyPoints]); err != nil || m.points < 0 {
		return nil, bad(KeyPoints, fmt.Sprintf("is %q, want a count", raw[KeyPoints]))
	}
	if m.rows, err = strconv.ParseInt(raw[KeyRows], 10, 64); err != nil || m.rows < 0 {
		return nil, bad(KeyRows, fmt.Sprintf("is %q, want a count", raw[KeyRows]))
	}
	m.specDigest, m.contentHash = raw[KeySpecDigest], raw[KeyContentHash]
	if !isHexHash(m.specDigest) {
		return nil, bad(KeySpecDigest, "is not a SHA-256 in hex")
	}
	if !isHexHash(m.contentHash) {
		return nil, bad(KeyContentHash, "is not a SHA-256 in hex")
	}
	if m.points == 1 {
		var ok bool
		if m.specHash, ok = raw[KeySpecHash]; !ok || m.specHash == "" {
			return nil, bad(KeySpecHash, "is missing (required for a single-point set)")
		}
		if m.spec, ok = raw[KeySpec]; !ok {
			return nil, bad(KeySpec, "is missing (required for a single-point set)")
		}
	}
	if m.table == TablePoints {
		if err := json.Unmarshal([]byte(raw[KeyTableHashes]), &m.tableHashes); err != nil {
			return nil, bad(KeyTableHashes, "is missing or not a JSON object")
		}
		want := tablesOf(*h)
		for _, t := range want {
			if t == TablePoints {
				continue
			}
			if !isHexHash(m.tableHashes[t]) {
				return nil, bad(KeyTableHashes, fmt.Sprintf("has no SHA-256 for table %s", t))
			}
		}
		if len(m.tableHashes) != len(want)-1 {
			return nil, bad(KeyTableHashes, fmt.Sprintf("lists %d tables, the set has %d besides the points table", len(m.tableHashes), len(want)-1))
		}
	}
	return m, nil
}
