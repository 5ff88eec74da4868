package plugin

import (
	"errors"
	"fmt"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/hashicorp/go-hclog"
	goplugin "github.com/hashicorp/go-plugin"
	"google.golang.org/grpc"
)

// ErrNotLaunched is returned by Serve when the process was started by hand
// rather than by a host.
var ErrNotLaunched = errors.New("this is a gridstage stage: a pipeline host launches it (gridstage pipeline); it is not run by hand")

// MismatchError reports a handshake between a host and a stage that share no
// stage protocol version.
type MismatchError struct {
	Stage string // the stage executable or name, when known
	// StageVersions and HostVersions list what each side speaks.
	StageVersions, HostVersions []int
}

func (e *MismatchError) Error() string {
	who := "the stage"
	if e.Stage != "" {
		who = "stage " + e.Stage
	}
	return fmt.Sprintf("%s speaks stage protocol version %s but the host speaks version %s", who, joinInts(e.StageVersions), joinInts(e.HostVersions))
}

// mismatchMarker starts the line a Go stage writes to stderr when the host
// speaks none of its versions; the host reads it back (see Launch).
const mismatchMarker = "gridstage-stage: protocol mismatch:"

// maxMessage is the gRPC message size limit on both sides: an inline
// chain of N states carries N² doubles (N = 2000 is 32 MB).
const maxMessage = 256 << 20

// Serve runs impl as a stage speaking ProtocolVersions until the host
// closes it. Call it from main; it returns ErrNotLaunched when the binary
// was run by hand and a *MismatchError when the host speaks none of the
// stage's versions (after writing the versions to stderr for the host).
func Serve(impl Stage) error { return ServeVersions(impl, ProtocolVersions) }

// ServeVersions is Serve for a stage that claims the given protocol
// versions; tests use it to stand in for older or newer stages.
func ServeVersions(impl Stage, versions []int) error {
	if os.Getenv(Handshake.MagicCookieKey) != Handshake.MagicCookieValue {
		return ErrNotLaunched
	}
	if host, ok := hostVersions(); ok && !slices.ContainsFunc(versions, func(v int) bool { return slices.Contains(host, v) }) {
		err := &MismatchError{StageVersions: versions, HostVersions: host}
		fmt.Fprintf(os.Stderr, "%s stage=%s host=%s\n", mismatchMarker, joinInts(versions), joinInts(host))
		return err
	}
	sets := map[int]goplugin.PluginSet{}
	for _, v := range versions {
		sets[v] = goplugin.PluginSet{PluginName: &GRPCPlugin{Impl: impl}}
	}
	hs := Handshake
	hs.ProtocolVersion = uint(slices.Min(versions))
	goplugin.Serve(&goplugin.ServeConfig{
		HandshakeConfig:  hs,
		VersionedPlugins: sets,
		GRPCServer: func(opts []grpc.ServerOption) *grpc.Server {
			return grpc.NewServer(append(opts, grpc.MaxRecvMsgSize(maxMessage), grpc.MaxSendMsgSize(maxMessage))...)
		},
		Logger: hclog.New(&hclog.LoggerOptions{Level: hclog.Warn, Output: os.Stderr, JSONFormat: true}),
	})
	return nil
}

// hostVersions reads the protocol versions the host offered (go-plugin
// passes them in PLUGIN_PROTOCOL_VERSIONS).
func hostVersions() ([]int, bool) {
	s := os.Getenv("PLUGIN_PROTOCOL_VERSIONS")
	if s == "" {
		return nil, false
	}
	var vs []int
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil {
			return nil, false
		}
		vs = append(vs, v)
	}
	return vs, true
}

func joinInts(vs []int) string {
	s := make([]string, len(vs))
	for i, v := range vs {
		s[i] = strconv.Itoa(v)
	}
	return strings.Join(s, ",")
}
