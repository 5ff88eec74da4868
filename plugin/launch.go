package plugin

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/hashicorp/go-hclog"
	goplugin "github.com/hashicorp/go-plugin"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
)

// LaunchOptions tune how a host starts a stage. The zero value is usable.
type LaunchOptions struct {
	// Name labels the stage in error messages; empty means the executable.
	Name string
	// StartTimeout bounds the wait for the stage's handshake; 0 means 30 s.
	StartTimeout time.Duration
	// Dir is the stage's working folder; empty means the host's.
	Dir string
	// Env adds environment variables (KEY=VALUE) to the host's own.
	Env []string
	// Stderr, if set, receives a copy of everything the stage writes to
	// stderr. The last lines are kept for error messages either way.
	Stderr io.Writer
}

// Process is a running stage. Close it when done: it stops the stage and
// everything the stage started.
type Process struct {
	name    string
	cmd     *exec.Cmd
	client  *goplugin.Client
	tail    *tailBuffer
	sockets string // folder for the stage's Unix socket
	once    sync.Once
}

// Launch starts the executable argv[0] with arguments argv[1:] as a stage,
// completes the handshake, and returns the running process and its Stage.
// The stage runs in its own process group so that Close can stop anything
// it spawned. On error nothing is left running.
func Launch(ctx context.Context, argv []string, opt LaunchOptions) (*Process, Stage, error) {
	if len(argv) == 0 || argv[0] == "" {
		return nil, nil, errors.New("plugin: no stage command given")
	}
	name := opt.Name
	if name == "" {
		name = argv[0]
	}
	path, err := exec.LookPath(argv[0])
	if err != nil {
		return nil, nil, fmt.Errorf("stage %s: %w", name, err)
	}
	cmd := exec.Command(path, argv[1:]...)
	cmd.Dir = opt.Dir
	// A Go stage listens on a Unix socket; put it in a folder of our own so
	// that Close can remove it even when the stage had to be killed.
	sockets, err := os.MkdirTemp("", "gridstage-stage-")
	if err != nil {
		return nil, nil, fmt.Errorf("stage %s: %w", name, err)
	}
	// The host's environment, then the options' (later entries win), then
	// go-plugin's handshake variables, which it appends.
	cmd.Env = append(os.Environ(), opt.Env...)
	cmd.Env = append(cmd.Env, goplugin.EnvUnixSocketDir+"="+sockets)
	ownProcessGroup(cmd)
	timeout := opt.StartTimeout
	if timeout == 0 {
		timeout = 30 * time.Second
	}
	tail := &tailBuffer{max: 40}
	var stderr io.Writer = tail
	if opt.Stderr != nil {
		stderr = io.MultiWriter(tail, opt.Stderr)
	}
	client := goplugin.NewClient(&goplugin.ClientConfig{
		HandshakeConfig:  Handshake,
		VersionedPlugins: VersionedPlugins(nil),
		Cmd:              cmd,
		AllowedProtocols: []goplugin.Protocol{goplugin.ProtocolGRPC},
		StartTimeout:     timeout,
		SkipHostEnv:      true, // already in cmd.Env, before opt.Env
		Stderr:           stderr,
		SyncStderr:       stderr,
		SyncStdout:       stderr,
		Logger:           hclog.New(&hclog.LoggerOptions{Level: hclog.Off, Output: io.Discard}),
		GRPCDialOptions: []grpc.DialOption{grpc.WithDefaultCallOptions(
			grpc.MaxCallRecvMsgSize(maxMessage), grpc.MaxCallSendMsgSize(maxMessage))},
	})
	p := &Process{name: name, cmd: cmd, client: client, tail: tail, sockets: sockets}
	stage, err := p.connect(ctx, timeout)
	if err != nil {
		p.Close()
		return nil, nil, err
	}
	return p, stage, nil
}

// connect performs the handshake and checks the stage's description, all
// within the start timeout.
func (p *Process) connect(ctx context.Context, timeout time.Duration) (Stage, error) {
	type result struct {
		raw any
		err error
	}
	ch := make(chan result, 1)
	go func() {
		rpc, err := p.client.Client()
		if err != nil {
			ch <- result{nil, err}
			return
		}
		raw, err := rpc.Dispense(PluginName)
		ch <- result{raw, err}
	}()
	var r result
	select {
	case r = <-ch:
	case <-ctx.Done():
		p.client.Kill()
		<-ch
		return nil, fmt.Errorf("stage %s: %w while starting", p.name, ctx.Err())
	}
	if r.err != nil {
		return nil, p.handshakeError(r.err)
	}
	stage, ok := r.raw.(Stage)
	if !ok {
		return nil, fmt.Errorf("stage %s: plugin %q is not a stage", p.name, PluginName)
	}
	dctx, cancel := context.WithTimeout(ctx, timeout)
	defer cancel()
	d, err := stage.Describe(dctx)
	if err != nil {
		return nil, p.Explain("Describe", err)
	}
	v := p.client.NegotiatedVersion()
	if len(d.ProtocolVersions) > 0 && !slices.Contains(d.ProtocolVersions, v) {
		return nil, &MismatchError{Stage: p.name, StageVersions: d.ProtocolVersions, HostVersions: ProtocolVersions}
	}
	return stage, nil
}

// goPluginMismatch matches go-plugin's own message when the stage answered
// the handshake with a version the host does not speak.
var goPluginMismatch = regexp.MustCompile(`Plugin version: (\d+), Client versions: \[([\d ]*)\]`)

// handshakeError explains why the handshake failed in one sentence.
func (p *Process) handshakeError(err error) error {
	p.waitExit(2 * time.Second)
	for _, line := range p.tail.lines() {
		if rest, ok := strings.CutPrefix(line, mismatchMarker); ok {
			return p.parseMarker(rest)
		}
	}
	if m := goPluginMismatch.FindStringSubmatch(err.Error()); m != nil {
		sv, _ := strconv.Atoi(m[1])
		return &MismatchError{Stage: p.name, StageVersions: []int{sv}, HostVersions: ProtocolVersions}
	}
	msg := err.Error()
	switch {
	case strings.Contains(msg, "timeout while waiting for plugin to start"):
		msg = "did not complete the handshake within the start timeout"
	case strings.Contains(msg, "plugin exited before we could connect"):
		msg = "exited before completing the handshake"
	case strings.Contains(msg, "Unrecognized remote plugin message"):
		first, _, _ := strings.Cut(strings.TrimPrefix(msg, "Unrecognized remote plugin message: "), "\n")
		if first == "" { // stdout closed: the stage ended without a word
			msg = "exited before completing the handshake"
		} else {
			msg = fmt.Sprintf("printed %q instead of a handshake line", first)
		}
	}
	return fmt.Errorf("stage %s %s%s", p.name, msg, p.exitNote())
}

func (p *Process) parseMarker(rest string) error {
	e := &MismatchError{Stage: p.name}
	for _, f := range strings.Fields(rest) {
		k, v, _ := strings.Cut(f, "=")
		var vs []int
		for _, s := range strings.Split(v, ",") {
			if n, err := strconv.Atoi(s); err == nil {
				vs = append(vs, n)
			}
		}
		switch k {
		case "stage":
			e.StageVersions = vs
		case "host":
			e.HostVersions = vs
		}
	}
	return e
}

// Explain turns an error from a call to the stage into one sentence that
// names the stage and the call and says whether the stage crashed, timed
// out or refused, with its exit status and last stderr line when it died.
func (p *Process) Explain(call string, err error) error {
	if err == nil {
		return nil
	}
	e := &CallError{Stage: p.name, Call: call, Err: err}
	var re *RemoteError
	switch {
	case errors.Is(err, context.DeadlineExceeded):
		e.Msg = fmt.Sprintf("did not answer %s within the timeout", call)
	case errors.Is(err, context.Canceled):
		e.Msg = fmt.Sprintf("was cancelled during %s", call)
	case errors.Is(err, ErrBadRequest):
		e.Msg = fmt.Sprintf("rejected %s: %s", call, err)
	case errors.Is(err, ErrUnsupported):
		e.Msg = fmt.Sprintf("does not support %s", call)
	case errors.As(err, &re) && re.Code == codes.Unavailable:
		if p.waitExit(2 * time.Second) {
			e.Msg = fmt.Sprintf("crashed during %s%s", call, p.exitNote())
		} else {
			e.Msg = fmt.Sprintf("lost its connection during %s: %s", call, err)
		}
	default:
		e.Msg = fmt.Sprintf("failed in %s: %s", call, err)
	}
	return e
}

// CallError is a failed call to a stage.
type CallError struct {
	Stage, Call string
	Msg         string // the sentence after "stage NAME"
	Err         error
}

func (e *CallError) Error() string { return "stage " + e.Stage + " " + e.Msg }
func (e *CallError) Unwrap() error { return e.Err }

// waitExit waits up to d for the stage process to end and reports whether
// it has.
func (p *Process) waitExit(d time.Duration) bool {
	deadline := time.Now().Add(d)
	for !p.client.Exited() {
		if time.Now().After(deadline) {
			return false
		}
		time.Sleep(10 * time.Millisecond)
	}
	return true
}

// exitNote describes how the stage ended and quotes its last stderr line,
// or returns "" while it runs.
func (p *Process) exitNote() string {
	if !p.client.Exited() || p.cmd.ProcessState == nil {
		return ""
	}
	note := " (" + p.cmd.ProcessState.String()
	if last := p.tail.last(); last != "" {
		note += "; last stderr line: " + strconv.Quote(last)
	}
	return note + ")"
}

// Name returns the stage's label.
func (p *Process) Name() string { return p.name }

// Stderr returns the last lines the stage wrote to stderr.
func (p *Process) Stderr() []string { return p.tail.lines() }

// Close stops the stage: a graceful shutdown, then after closeGrace a
// kill of its whole process group, so that nothing it started outlives it
// and no child holding the stage's pipes (a shell wrapper's sleep, say)
// can keep the host waiting. It returns within about 2·closeGrace whatever
// the stage does. Safe to call twice.
func (p *Process) Close() {
	p.once.Do(func() {
		var pgid int
		if p.cmd.Process != nil {
			pgid = p.cmd.Process.Pid
		}
		done := make(chan struct{})
		go func() {
			// go-plugin's Kill waits for the stage's stdout and stderr to
			// close, which a grandchild that inherited them can put off
			// forever; killing the group below releases it.
			p.client.Kill()
			close(done)
		}()
		select {
		case <-done:
		case <-time.After(closeGrace):
		}
		if pgid > 0 {
			killProcessGroup(pgid)
		}
		select {
		case <-done:
		case <-time.After(closeGrace):
		}
		if p.sockets != "" {
			os.RemoveAll(p.sockets)
		}
	})
}

// closeGrace is how long Close lets a stage shut down by itself (go-plugin
// waits 2 s for a graceful exit) before it kills the stage's process group.
const closeGrace = 3 * time.Second

// tailBuffer keeps the last max lines written to it.
type tailBuffer struct {
	mu      sync.Mutex
	max     int
	partial []byte
	buf     []string
}

func (t *tailBuffer) Write(b []byte) (int, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	t.partial = append(t.partial, b...)
	for {
		i := slices.Index(t.partial, '\n')
		if i < 0 {
			break
		}
		t.buf = append(t.buf, string(t.partial[:i]))
		t.partial = t.partial[i+1:]
		if len(t.buf) > t.max {
			t.buf = t.buf[len(t.buf)-t.max:]
		}
	}
	return len(b), nil
}

func (t *tailBuffer) lines() []string {
	t.mu.Lock()
	defer t.mu.Unlock()
	out := slices.Clone(t.buf)
	if len(t.partial) > 0 {
		out = append(out, string(t.partial))
	}
	return out
}

// last returns the most telling stderr line: a Go panic or fatal error if
// there is one, else the last plain-text line (go-plugin's JSON log lines
// and stack frames are skipped).
func (t *tailBuffer) last() string {
	ls := t.lines()
	for _, l := range ls {
		if strings.HasPrefix(l, "panic: ") || strings.HasPrefix(l, "fatal error: ") {
			return l
		}
	}
	for i := len(ls) - 1; i >= 0; i-- {
		s := strings.TrimSpace(ls[i])
		if s == "" || strings.HasPrefix(s, "{") || strings.HasPrefix(ls[i], "\t") || strings.HasPrefix(s, "goroutine ") {
			continue
		}
		return s
	}
	return ""
}
