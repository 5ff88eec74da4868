//go:build !unix

package docblock

import "testing"

// lockDir does nothing where advisory folder locks are not available:
// run -update for one package at a time there.
func lockDir(testing.TB, string) func() { return func() {} }
