package lineage

import (
	"fmt"
	"strings"
)

// MinPrefix is the shortest prefix of an estimate id or chain hash that a
// query accepts.
const MinPrefix = 6

// ByEstimate returns the records of the estimate whose id starts with
// prefix: the chains that fed it. It is an error if the prefix is shorter
// than MinPrefix, matches no estimate, or matches more than one.
func ByEstimate(recs []Record, prefix string) ([]Record, error) {
	return match(recs, prefix, "estimate", func(r Record) string { return r.EstimateID })
}

// ByChain returns the records whose chain hash starts with prefix: the
// estimates that used the chain.
func ByChain(recs []Record, prefix string) ([]Record, error) {
	return match(recs, prefix, "chain", func(r Record) string { return r.ChainHash })
}

func match(recs []Record, prefix, what string, key func(Record) string) ([]Record, error) {
	prefix = strings.ToLower(strings.TrimSpace(prefix))
	if len(prefix) < MinPrefix {
		return nil, fmt.Errorf("lineage: %s id %q is too short: give at least %d hex digits", what, prefix, MinPrefix)
	}
	var out []Record
	ids := map[string]bool{}
	for _, r := range recs {
		if k := key(r); strings.HasPrefix(k, prefix) {
			out = append(out, r)
			ids[k] = true
		}
	}
	switch {
	case len(ids) == 0:
		return nil, fmt.Errorf("lineage: no %s %s in the ledger", what, prefix)
	case len(ids) > 1:
		return nil, fmt.Errorf("lineage: %s prefix %s is ambiguous: it matches %d ids", what, prefix, len(ids))
	}
	return out, nil
}
