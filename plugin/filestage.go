package plugin

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"time"

	"gridstage/formats/arrays"
)

// FileContract names the version of the file contract a FileStage speaks;
// it is the "contract" field of every request it writes (docs/FORMATS.md,
// "File-contract stages").
const FileContract = "gridstage-files/1"

// Names of the files of a run's work folder.
const (
	RequestFile  = "request.json"
	EstimateFile = "estimate.json"
)

// FileStage is a stage that runs an ordinary executable under the file
// contract instead of the stage protocol: for every chain of an estimate it
// makes a fresh work folder, writes the request (request.json: the model,
// its parameters and the chain's identity) and the chain as plain-text
// arrays, runs the command once, and reads the estimate the program wrote
// to estimate.json. The program runs in its own process group under
// Timeout; when it ends, times out or the context is cancelled, the whole
// group is killed, so nothing it started outlives the run. A run that
// exits non-zero, overruns, writes no estimate, or writes one that is
// malformed or not finite fails with one sentence naming the stage and the
// chain, and keeps its work folder for inspection; a successful run's
// folder is removed.
//
// FileStage implements Stage (Estimate only), so a pipeline host checks,
// writes and records its estimates exactly as a protocol stage's. It asks
// for chains inline (CapChainInline): the host loads and verifies every
// chain before the program sees it.
type FileStage struct {
	Name    string   // the stage's name; labels errors and the ledger
	Version string   // recorded in the ledger; empty: CommandVersion of Command
	Command []string // argv; "{request}" and "{work}" inside an argument are replaced by those paths
	Dir     string   // the program's working folder; empty: the host's
	// WorkRoot holds the runs' work folders (created if needed); empty
	// means the system's temporary folder.
	WorkRoot string
	// Timeout limits each run of the program; 0 means no limit beyond
	// the context's.
	Timeout time.Duration
	// Env adds variables (KEY=VALUE) to the host's environment.
	Env []string
	// Stderr, if set, receives a copy of the program's stdout and stderr.
	Stderr io.Writer
	// Arrays, if set, returns a chain as the named arrays of gridstage
	// arrays (FileLoader.PointArrays); each run's folder then also holds
	// chain.npz and chain.mat with them.
	Arrays func(context.Context, ChainRef) ([]arrays.Array, error)
}

var _ Stage = (*FileStage)(nil)

// Describe names the stage: its Name and Version (computed on first use
// when empty).
func (f *FileStage) Describe(context.Context) (Description, error) {
	if f.Version == "" {
		v, err := CommandVersion(f.Command, f.Dir)
		if err != nil {
			return Description{}, fmt.Errorf("stage %s: %w", f.Name, err)
		}
		f.Version = v
	}
	return Description{Name: f.Name, Version: f.Version, Capabilities: []string{CapEstimate, CapChainInline}}, nil
}

// Health checks that the command can be found.
func (f *FileStage) Health(context.Context) error {
	if len(f.Command) == 0 || f.Command[0] == "" {
		return fmt.Errorf("stage %s: no command given", f.Name)
	}
	if _, err := exec.LookPath(f.command0()); err != nil {
		return fmt.Errorf("stage %s: %w", f.Name, err)
	}
	return nil
}

// Discretize is not part of the file contract.
func (f *FileStage) Discretize(context.Context, DiscretizeRequest) (*Discretization, error) {
	return nil, ErrUnsupported
}

// Close does nothing: every run's process group is gone when its Estimate
// returns. It lets a host treat file stages and launched protocol stages
// alike.
func (f *FileStage) Close() {}

// Explain returns err: FileStage's errors already name the stage.
func (f *FileStage) Explain(_ string, err error) error { return err }

func (f *FileStage) command0() string {
	c := f.Command[0]
	if f.Dir != "" && !filepath.IsAbs(c) && strings.ContainsRune(c, '/') {
		c = filepath.Join(f.Dir, c)
	}
	return c
}

// Estimate runs the program once per chain of req, in order, and returns
// one estimate per chain. Every chain must come with its numbers.
func (f *FileStage) Estimate(ctx context.Context, req EstimateRequest) ([]Estimate, error) {
	out := make([]Estimate, 0, len(req.Chains))
	for _, in := range req.Chains {
		if in.Data == nil {
			return nil, fmt.Errorf("stage %s: chain %s came without its numbers", f.Name, in.Ref.ChainHash)
		}
		e, err := f.run(ctx, req, in)
		if err != nil {
			return nil, err
		}
		out = append(out, e)
	}
	return out, nil
}

// run is one run of the program on one chain.
func (f *FileStage) run(ctx context.Context, req EstimateRequest, in ChainInput) (Estimate, error) {
	root := f.WorkRoot
	if root == "" {
		root = os.TempDir()
	}
	if err := os.MkdirAll(root, 0o777); err != nil {
		return Estimate{}, fmt.Errorf("stage %s: work folder: %w", f.Name, err)
	}
	work, err := os.MkdirTemp(root, f.Name+"-")
	if err != nil {
		return Estimate{}, fmt.Errorf("stage %s: work folder: %w", f.Name, err)
	}
	which := chainLabel(in.Ref)
	fail := func(format string, args ...any) error {
		return &CallError{Stage: f.Name, Call: "Estimate",
			Msg: fmt.Sprintf(format, args...) + " (its files are kept in " + work + ")"}
	}
	var named []arrays.Array
	if f.Arrays != nil {
		if named, err = f.Arrays(ctx, in.Ref); err != nil {
			return Estimate{}, fmt.Errorf("stage %s: the arrays of %s: %w", f.Name, which, err)
		}
	}
	request, err := writeRequest(work, f.Name, req, in, named)
	if err != nil {
		return Estimate{}, fmt.Errorf("stage %s: writing the request for %s: %w", f.Name, which, err)
	}

	rctx, cancel := ctx, context.CancelFunc(func() {})
	if f.Timeout > 0 {
		rctx, cancel = context.WithTimeout(ctx, f.Timeout)
	}
	defer cancel()
	argv := make([]string, len(f.Command))
	for i, a := range f.Command {
		a = strings.ReplaceAll(a, "{request}", request)
		argv[i] = strings.ReplaceAll(a, "{work}", work)
	}
	path, err := exec.LookPath(f.command0())
	if err != nil {
		return Estimate{}, fmt.Errorf("stage %s: %w", f.Name, err)
	}
	cmd := exec.Command(path, argv[1:]...)
	cmd.Dir = f.Dir
	cmd.Env = append(os.Environ(), f.Env...)
	cmd.Env = append(cmd.Env, "GRIDSTAGE_REQUEST="+request, "GRIDSTAGE_WORK="+work)
	tail := &tailBuffer{max: 40}
	var sink io.Writer = tail
	if f.Stderr != nil {
		sink = io.MultiWriter(tail, f.Stderr)
	}
	cmd.Stdout, cmd.Stderr = sink, sink
	ownProcessGroup(cmd)
	if err := cmd.Start(); err != nil {
		return Estimate{}, fail("could not start %s: %v", f.Command[0], err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	var waitErr error
	select {
	case waitErr = <-done:
	case <-rctx.Done():
		killProcessGroup(cmd.Process.Pid)
		waitErr = <-done
	}
	// Whatever the program left behind in its group goes with it.
	killProcessGroup(cmd.Process.Pid)
	last := ""
	if l := tail.last(); l != "" {
		last = "; last output line: " + strconv.Quote(l)
	}
	switch {
	case errors.Is(rctx.Err(), context.DeadlineExceeded) && ctx.Err() == nil:
		return Estimate{}, fail("did not finish within the timeout of %s on %s and was stopped with everything it started%s", f.Timeout, which, last)
	case ctx.Err() != nil:
		return Estimate{}, fail("was cancelled on %s", which)
	case waitErr != nil:
		var ee *exec.ExitError
		if errors.As(waitErr, &ee) && ee.ExitCode() == ExitBadRequest {
			reason := tail.last()
			if reason == "" {
				reason = "no reason given on stderr"
			}
			os.RemoveAll(work)
			return Estimate{}, &CallError{Stage: f.Name, Call: "Estimate", Err: ErrBadRequest,
				Msg: fmt.Sprintf("rejected the request on %s: %s", which, reason)}
		}
		return Estimate{}, fail("failed on %s (%s)%s", which, exitText(cmd.ProcessState, waitErr), last)
	}
	e, err := readEstimate(filepath.Join(work, EstimateFile))
	if err != nil {
		return Estimate{}, fail("exited normally on %s but %v", which, err)
	}
	e.Model = req.Model
	e.ChainHashes = []string{in.Ref.ChainHash}
	os.RemoveAll(work)
	os.Remove(root) // only when empty
	return e, nil
}

// ExitBadRequest is the exit status by which a file-contract program says
// the request does not suit it (a missing or out-of-range parameter, a
// chain of the wrong dimension); its last line on stderr says why.
const ExitBadRequest = 2

func exitText(ps *os.ProcessState, err error) string {
	if ps != nil {
		return ps.String()
	}
	return err.Error()
}

// chainLabel names a chain in messages: process, point and short hash.
func chainLabel(r ChainRef) string {
	h := r.ChainHash
	if len(h) > 12 {
		h = h[:12]
	}
	if r.Process == "" {
		return "chain " + h
	}
	return fmt.Sprintf("chain %s (%s point %d)", h, r.Process, r.Point)
}

// CommandVersion derives a stage version from what the command runs: the
// hex SHA-256 (first 16 digits, prefixed "sha256:") over every argument,
// taking the bytes of each argument that names a regular file (the
// executable found on the PATH, a script) and the text of the others. A
// changed program or script gets a new version, so estimates from it get
// new ids. dir resolves relative paths.
func CommandVersion(argv []string, dir string) (string, error) {
	h := sha256.New()
	for i, a := range argv {
		p := a
		if i == 0 {
			if lp, err := exec.LookPath(a); err == nil {
				p = lp
			}
		}
		if !filepath.IsAbs(p) && dir != "" {
			p = filepath.Join(dir, p)
		}
		if st, err := os.Stat(p); err == nil && st.Mode().IsRegular() {
			b, err := os.ReadFile(p)
			if err != nil {
				return "", err
			}
			fmt.Fprintf(h, "file %d\n", len(b))
			h.Write(b)
			continue
		}
		fmt.Fprintf(h, "arg %d\n%s", len(a), a)
	}
	return "sha256:" + hex.EncodeToString(h.Sum(nil))[:16], nil
}

// maxEstimateFile bounds what is read of an estimate.json.
const maxEstimateFile = 64 << 20

var nonFinite = regexp.MustCompile(`(?:^|[\s:\[,])(-?Infinity|NaN)(?:[\s,\]\}]|$)`)

// readEstimate reads and checks the estimate a program wrote. Errors
// complete the sentence "… exited normally on CHAIN but …".
func readEstimate(path string) (Estimate, error) {
	b, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return Estimate{}, fmt.Errorf("wrote no %s", EstimateFile)
	}
	if err != nil {
		return Estimate{}, fmt.Errorf("its %s cannot be read: %v", EstimateFile, err)
	}
	if len(b) > maxEstimateFile {
		return Estimate{}, fmt.Errorf("its %s is over %d MiB", EstimateFile, maxEstimateFile>>20)
	}
	var raw struct {
		Scalars map[string]json.RawMessage   `json:"scalars"`
		Vectors map[string][]json.RawMessage `json:"vectors"`
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&raw); err != nil {
		if m := nonFinite.FindSubmatch(b); m != nil {
			return Estimate{}, fmt.Errorf("its %s holds %s: estimates must be finite numbers", EstimateFile, m[1])
		}
		return Estimate{}, fmt.Errorf("its %s is not an estimate: %s (want {\"scalars\": {NAME: NUMBER}, \"vectors\": {NAME: [NUMBER, ...]}})", EstimateFile, jsonError(b, err))
	}
	if dec.More() {
		return Estimate{}, fmt.Errorf("its %s holds more than one JSON value", EstimateFile)
	}
	e := Estimate{Scalars: map[string]float64{}, Vectors: map[string][]float64{}}
	for _, k := range sortedKeys(raw.Scalars) {
		v, err := finiteNumber(raw.Scalars[k])
		if err != nil {
			return Estimate{}, fmt.Errorf("its %s has scalars.%s = %s: %v", EstimateFile, k, raw.Scalars[k], err)
		}
		e.Scalars[k] = v
	}
	for _, k := range sortedKeys(raw.Vectors) {
		vs := make([]float64, len(raw.Vectors[k]))
		for i, r := range raw.Vectors[k] {
			v, err := finiteNumber(r)
			if err != nil {
				return Estimate{}, fmt.Errorf("its %s has vectors.%s[%d] = %s: %v", EstimateFile, k, i, r, err)
			}
			vs[i] = v
		}
		e.Vectors[k] = vs
	}
	for k := range e.Scalars {
		if strings.TrimSpace(k) == "" {
			return Estimate{}, fmt.Errorf("its %s names a scalar with an empty name", EstimateFile)
		}
	}
	for k := range e.Vectors {
		if strings.TrimSpace(k) == "" {
			return Estimate{}, fmt.Errorf("its %s names a vector with an empty name", EstimateFile)
		}
	}
	if len(e.Scalars) == 0 && len(e.Vectors) == 0 {
		return Estimate{}, fmt.Errorf("its %s has no values (want {\"scalars\": {NAME: NUMBER}, \"vectors\": {NAME: [NUMBER, ...]}})", EstimateFile)
	}
	return e, nil
}

// finiteNumber decodes a JSON number that fits a finite float64.
func finiteNumber(r json.RawMessage) (float64, error) {
	var n json.Number
	if err := json.Unmarshal(r, &n); err != nil {
		return 0, errors.New("want a number")
	}
	v, err := strconv.ParseFloat(n.String(), 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, errors.New("estimates must be finite numbers")
	}
	return v, nil
}

// jsonError gives a JSON decoding error with the line it happened on.
func jsonError(b []byte, err error) string {
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	off := int64(-1)
	switch {
	case errors.As(err, &se):
		off = se.Offset
	case errors.As(err, &te):
		off = te.Offset
	}
	if off < 0 {
		return err.Error()
	}
	line := 1 + bytes.Count(b[:min(int(off), len(b))], []byte("\n"))
	return fmt.Sprintf("line %d: %v", line, err)
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
