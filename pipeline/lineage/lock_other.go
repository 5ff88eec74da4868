//go:build !unix

package lineage

// lock is a no-op where advisory locks are not available: concurrent
// appends may then lose rows, but a ledger is never half-written.
func lock(string) (func(), error) { return func() {}, nil }

func syncDir(string) error { return nil }
