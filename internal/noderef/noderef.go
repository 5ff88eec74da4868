// Package noderef locates the Node.js reference readers of tools/interop
// (DuckDB and apache-arrow from npm) for tests.
package noderef

import (
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// Interop returns the node executable and the absolute tools/interop
// folder with its installed packages. When node or a package is missing
// the test is skipped, except under CI=true, where .ci/run installs them
// and their absence is a failure; purpose names the check in the message.
func Interop(t testing.TB, purpose string) (node, dir string) {
	t.Helper()
	missing := func(what string) {
		msg := purpose + " needs " + what + " (install with: cd tools/interop && npm ci)"
		if os.Getenv("CI") == "true" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	dir, err := interopDir()
	if err != nil {
		missing("the tools/interop folder (" + err.Error() + ")")
	}
	node, err = exec.LookPath("node")
	if err != nil {
		missing("node on the PATH")
	}
	for _, pkg := range []string{"@duckdb/node-api", "apache-arrow"} {
		if _, err := os.Stat(filepath.Join(dir, "node_modules", pkg, "package.json")); err != nil {
			missing("the npm package " + pkg)
		}
	}
	return node, dir
}

// interopDir finds tools/interop beneath the module root: the nearest
// folder at or above the working directory that holds go.mod.
func interopDir() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return filepath.Join(dir, "tools", "interop"), nil
		}
		up := filepath.Dir(dir)
		if up == dir {
			return "", os.ErrNotExist
		}
		dir = up
	}
}
