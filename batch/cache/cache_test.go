package cache

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"sync"
	"testing"
	"time"

	"gridstage/solver"
)

// solved has the shape of what a run stores: a chain, its diagnostics, and
// a baseline chain with its diagnostics.
type solved struct {
	Chain               *solver.Chain
	Diagnostics         solver.Diagnostics
	Baseline            *solver.Chain
	BaselineDiagnostics *solver.Diagnostics
}

func solve(t testing.TB, rho float64) solved {
	t.Helper()
	p := solver.AR1{Rho: rho, Sigma: 0.1}
	c, err := p.Discretize(solver.Settings{States: 9, Moments: 4})
	if err != nil {
		t.Fatal(err)
	}
	b, err := p.Discretize(solver.Settings{States: 9, Method: solver.Tauchen})
	if err != nil {
		t.Fatal(err)
	}
	bd := solver.Diagnose(b, p)
	return solved{Chain: c, Diagnostics: solver.Diagnose(c, p), Baseline: b, BaselineDiagnostics: &bd}
}

func key(s string) string {
	sum := sha256.Sum256([]byte(s))
	return hex.EncodeToString(sum[:])
}

// sameBits reports whether two values encode to the same bytes, which for
// this codec means equal bit for bit.
func sameBits(a, b any) bool {
	return bytes.Equal(encodeValue(nil, reflect.ValueOf(a)), encodeValue(nil, reflect.ValueOf(b)))
}

func TestPutGet(t *testing.T) {
	c, err := Open(filepath.Join(t.TempDir(), "nested", "cache"))
	if err != nil {
		t.Fatal(err)
	}
	want := solve(t, 0.9)
	k := key("ar1 rho=0.9")
	var got solved
	if hit, err := c.Get(k, &got); hit || err != nil {
		t.Fatalf("empty cache: hit %v, err %v", hit, err)
	}
	if err := c.Put(k, &want); err != nil {
		t.Fatal(err)
	}
	if hit, err := c.Get(k, &got); !hit || err != nil {
		t.Fatalf("after Put: hit %v, err %v", hit, err)
	}
	if !sameBits(got, want) {
		t.Fatal("cached solution differs from the computed one")
	}
	if got.Chain.Transition[40] != want.Chain.Transition[40] || got.BaselineDiagnostics.Method != "tauchen" {
		t.Fatalf("fields lost: %v %q", got.Chain.Transition[40], got.BaselineDiagnostics.Method)
	}
	// Another type layout under the same key is a plain miss.
	var other struct{ Chain *solver.Chain }
	if hit, err := c.Get(k, &other); hit || err != nil {
		t.Fatalf("other layout: hit %v, err %v", hit, err)
	}
}

func TestDirPrefersFlag(t *testing.T) {
	t.Setenv(EnvDir, "/from/env")
	if Dir("/from/flag") != "/from/flag" || Dir("") != "/from/env" {
		t.Fatal("flag must win over GRIDSTAGE_CACHE, which fills in when no flag is set")
	}
	t.Setenv(EnvDir, "")
	if Dir("") != "" {
		t.Fatal("no flag and no variable must mean no cache")
	}
}

func TestBadKeys(t *testing.T) {
	c, _ := Open(t.TempDir())
	v := solve(t, 0.5)
	for _, k := range []string{"", "abc", "../../etc/passwd", strings.Repeat("A", 64), strings.Repeat("g", 64), strings.Repeat("a", 65)} {
		var ke *KeyError
		if err := c.Put(k, &v); !errors.As(err, &ke) {
			t.Errorf("Put(%q): %v", k, err)
		}
		if _, err := c.Get(k, &v); !errors.As(err, &ke) {
			t.Errorf("Get(%q): %v", k, err)
		}
	}
}

// damage checks that a damaged entry reads as a miss with a DamagedError,
// leaves the destination untouched, and is replaced by the next Put.
func damage(t *testing.T, c *Cache, k string, want *solved, ruin func([]byte) []byte) {
	t.Helper()
	if err := c.Put(k, want); err != nil {
		t.Fatal(err)
	}
	p := c.path(k)
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, ruin(b), 0o644); err != nil {
		t.Fatal(err)
	}
	got := solved{Chain: &solver.Chain{Dim: 7}}
	hit, err := c.Get(k, &got)
	var de *DamagedError
	if hit || !errors.As(err, &de) || de.Path != p {
		t.Fatalf("damaged entry: hit %v, err %v", hit, err)
	}
	if got.Chain.Dim != 7 {
		t.Fatal("a failed Get changed the destination")
	}
	if err := c.Put(k, want); err != nil {
		t.Fatal(err)
	}
	if hit, err := c.Get(k, &got); !hit || err != nil || !sameBits(got, *want) {
		t.Fatalf("after re-Put: hit %v err %v", hit, err)
	}
}

func TestDamagedEntries(t *testing.T) {
	c, _ := Open(t.TempDir())
	want := solve(t, 0.95)
	k := key("damage")
	size := func() int {
		b, _ := os.ReadFile(c.path(k))
		return len(b)
	}
	if err := c.Put(k, &want); err != nil {
		t.Fatal(err)
	}
	n := size()
	for _, cut := range []int{0, 1, 8, headerSize, headerSize + 1, n / 2, n - sumSize, n - 1} {
		t.Run(fmt.Sprintf("truncated to %d", cut), func(t *testing.T) {
			damage(t, c, k, &want, func(b []byte) []byte { return b[:cut] })
		})
	}
	t.Run("extended", func(t *testing.T) {
		damage(t, c, k, &want, func(b []byte) []byte { return append(b, 0) })
	})
	// A flip in every region of the file: magic, key, fingerprint, length,
	// payload (a transition probability), checksum.
	for _, at := range []int{0, 9, 41, 73, headerSize + 100, n - 1} {
		t.Run(fmt.Sprintf("bit flipped at %d", at), func(t *testing.T) {
			damage(t, c, k, &want, func(b []byte) []byte { b[at] ^= 0x10; return b })
		})
	}
	t.Run("entry of another key", func(t *testing.T) {
		other := key("other")
		if err := c.Put(other, &want); err != nil {
			t.Fatal(err)
		}
		foreign, _ := os.ReadFile(c.path(other))
		damage(t, c, k, &want, func([]byte) []byte { return foreign })
	})
}

// TestConcurrentGoroutines has many goroutines write and read the same few
// keys at once: every read is a miss or the exact value, never damage.
func TestConcurrentGoroutines(t *testing.T) {
	c, _ := Open(t.TempDir())
	vals := make([]solved, 4)
	for i := range vals {
		vals[i] = solve(t, 0.2*float64(i))
	}
	var wg sync.WaitGroup
	errs := make(chan error, 100)
	for g := 0; g < 16; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for r := 0; r < 30; r++ {
				i := (g + r) % len(vals)
				k := key(fmt.Sprint("job", i))
				if err := c.Put(k, &vals[i]); err != nil {
					errs <- err
					return
				}
				var got solved
				hit, err := c.Get(k, &got)
				if err != nil || !hit || !sameBits(got, vals[i]) {
					errs <- fmt.Errorf("goroutine %d round %d: hit %v err %v", g, r, hit, err)
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	leftovers(t, c)
}

// leftovers fails if any temporary file is left in the cache.
func leftovers(t *testing.T, c *Cache) {
	t.Helper()
	matches, _ := filepath.Glob(filepath.Join(c.Folder(), "*", tempPrefix+"*"))
	if len(matches) > 0 {
		t.Fatalf("temporary files left: %v", matches)
	}
}

const childEnv = "GRIDSTAGE_CACHE_TEST_CHILD"

// TestMain lets the test binary act as a separate writer process.
func TestMain(m *testing.M) {
	if dir := os.Getenv(childEnv); dir != "" {
		if err := childWriter(dir); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// childWriter puts and reads back the same keys as its sibling processes.
func childWriter(dir string) error {
	c, err := Open(dir)
	if err != nil {
		return err
	}
	for r := 0; r < 20; r++ {
		for i := 0; i < 8; i++ {
			v := solve(panicTB{}, 0.1*float64(i))
			k := key(fmt.Sprint("job", i))
			if err := c.Put(k, &v); err != nil {
				return err
			}
			var got solved
			hit, err := c.Get(k, &got)
			if err != nil || !hit || !sameBits(got, v) {
				return fmt.Errorf("pid %d: job %d: hit %v, err %v", os.Getpid(), i, hit, err)
			}
		}
	}
	return nil
}

// panicTB is enough of testing.TB for solve outside a test.
type panicTB struct{ testing.TB }

func (panicTB) Helper()           {}
func (panicTB) Fatal(args ...any) { panic(fmt.Sprint(args...)) }

// TestConcurrentProcesses runs several copies of the test binary writing
// the same keys into one cache folder at once.
func TestConcurrentProcesses(t *testing.T) {
	if testing.Short() {
		t.Skip("spawns processes")
	}
	dir := t.TempDir()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	var cmds []*exec.Cmd
	var outs []*bytes.Buffer
	for p := 0; p < 4; p++ {
		cmd := exec.Command(exe, "-test.run=^$")
		cmd.Env = append(os.Environ(), childEnv+"="+dir)
		out := &bytes.Buffer{}
		cmd.Stdout, cmd.Stderr = out, out
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		cmds, outs = append(cmds, cmd), append(outs, out)
	}
	for i, cmd := range cmds {
		if err := cmd.Wait(); err != nil {
			t.Errorf("writer %d: %v: %s", i, err, outs[i])
		}
	}
	c, _ := Open(dir)
	for i := 0; i < 8; i++ {
		var got solved
		want := solve(t, 0.1*float64(i))
		if hit, err := c.Get(key(fmt.Sprint("job", i)), &got); !hit || err != nil || !sameBits(got, want) {
			t.Errorf("job %d after the writers: hit %v, err %v", i, hit, err)
		}
	}
	leftovers(t, c)
}

func TestPrune(t *testing.T) {
	c, _ := Open(t.TempDir())
	v := solve(t, 0.3)
	k := key("keep")
	if err := c.Put(k, &v); err != nil {
		t.Fatal(err)
	}
	dir := filepath.Dir(c.path(k))
	old := filepath.Join(dir, tempPrefix+"killed")
	fresh := filepath.Join(dir, tempPrefix+"writing")
	for _, p := range []string{old, fresh} {
		if err := os.WriteFile(p, []byte("partial"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	long := time.Now().Add(-3 * time.Hour)
	os.Chtimes(old, long, long)
	n, err := c.Prune(time.Hour)
	if err != nil || n != 1 {
		t.Fatalf("Prune removed %d, err %v", n, err)
	}
	if _, err := os.Stat(fresh); err != nil {
		t.Fatal("Prune removed a file still being written")
	}
	if hit, _ := c.Get(k, &v); !hit {
		t.Fatal("Prune removed an entry")
	}
}

func TestSyncedPut(t *testing.T) {
	c, _ := Open(t.TempDir())
	c.Sync = true
	want := solve(t, 0.7)
	k := key("synced")
	if err := c.Put(k, &want); err != nil {
		t.Fatal(err)
	}
	var got solved
	if hit, err := c.Get(k, &got); !hit || err != nil || !sameBits(got, want) {
		t.Fatalf("synced entry: hit %v, err %v", hit, err)
	}
	leftovers(t, c)
}
