package plugin

import (
	"context"
	"slices"

	goplugin "github.com/hashicorp/go-plugin"
)

// ProtocolVersion is the stage protocol version this build speaks: the
// handshake's application protocol version and the package version of
// stagepb (gridstage.stage.v1).
const ProtocolVersion = 1

// ProtocolMinor is the minor version of the protocol: additions that older
// stages ignore. Minor 1 adds ChainData.Sensitivities, filled for stages
// that list CapSensitivities.
const ProtocolMinor = 1

// ProtocolVersions lists every stage protocol version this build speaks.
var ProtocolVersions = []int{ProtocolVersion}

// PluginName is the name of the stage plugin in the plugin set, the same on
// both sides of the boundary.
const PluginName = "stage"

// Handshake is the go-plugin handshake every stage and host share. The
// cookie is not a secret: it only stops a stage binary run by hand from
// waiting for a host that will never connect.
var Handshake = goplugin.HandshakeConfig{
	ProtocolVersion:  ProtocolVersion,
	MagicCookieKey:   "GRIDSTAGE_STAGE_COOKIE",
	MagicCookieValue: "b0d7c5e2-gridstage-stage-protocol",
}

// Capabilities a stage may list in its Description.
const (
	CapDiscretize  = "discretize"   // implements Discretize
	CapEstimate    = "estimate"     // implements Estimate
	CapArrowStream = "arrow-stream" // Discretize can stream chains as Arrow IPC
	CapChainInline = "chain-inline" // Estimate wants ChainInput.Data filled by the host
	// CapSensitivities: Estimate wants ChainInput.Data filled by the host
	// with the chain's parameter sensitivities (protocol minor 1).
	CapSensitivities = "sensitivities"
)

// Stage is what every stage implements. Every call takes the caller's
// context; a stage should stop work when it is cancelled.
type Stage interface {
	// Describe names the stage and lists its capabilities.
	Describe(ctx context.Context) (Description, error)
	// Health returns nil when the stage is ready for work.
	Health(ctx context.Context) error
	// Discretize runs a job spec or manifest and returns references to the
	// chains it wrote (ErrUnsupported if the stage does not discretize).
	Discretize(ctx context.Context, req DiscretizeRequest) (*Discretization, error)
	// Estimate solves req.Model on each chain (ErrUnsupported if the stage
	// does not estimate).
	Estimate(ctx context.Context, req EstimateRequest) ([]Estimate, error)
}

// Description names a stage and what it can do.
type Description struct {
	Name             string
	Version          string
	ProtocolVersions []int
	Capabilities     []string
	Models           []string // models Estimate accepts
}

// Can reports whether the stage lists capability c.
func (d Description) Can(c string) bool { return slices.Contains(d.Capabilities, c) }

// DiscretizeRequest asks a stage to run either a whole manifest or one job
// spec; exactly one of Manifest and JobSpec is set.
type DiscretizeRequest struct {
	Manifest    []byte // a run manifest, YAML or JSON
	JobSpec     []byte // one canonical job spec (JSON)
	SourceName  string // file name of the manifest, for messages and relative paths
	OutDir      string // folder for the output
	StreamArrow bool   // also return each chain as Arrow IPC bytes
}

// Discretization is what Discretize returns.
type Discretization struct {
	Chains []ChainRef
	// Arrow holds the Arrow IPC stream of each chain by chain hash, when
	// requested.
	Arrow map[string][]byte
}

// ChainRef identifies one chain (one sweep point of one process) in a
// written output set.
type ChainRef struct {
	Path         string             `json:"path"` // the set's points file
	Process      string             `json:"process"`
	Point        int                `json:"point"`
	ChainHash    string             `json:"chain_hash"` // hash of the chain's numbers
	SpecHash     string             `json:"spec_hash"`
	ManifestHash string             `json:"manifest_hash,omitempty"` // empty for a lone job spec
	FileHash     string             `json:"file_hash"`               // content hash of the file at Path
	Params       map[string]float64 `json:"params,omitempty"`
	// Numeric is the numeric version the chain was solved under, as its
	// file records it; filled by the host from the file (the stage
	// protocol does not carry it).
	Numeric string `json:"numeric_version,omitempty"`
}

// ChainData holds a time-invariant chain's numbers.
type ChainData struct {
	Dim        int
	Grid       []float64 // row-major, Dim values per state
	Transition []float64 // row-major
	Matched    []int     // moments matched per state
	Initial    []float64 // nil when absent
	// Sensitivities are the chain's derivatives with respect to its
	// process's parameters, for stages listing CapSensitivities.
	Sensitivities []Sensitivity
	// Spec is the chain's canonical spec as its file records it; the host
	// keeps it to compute sensitivities, and the protocol does not carry it.
	Spec []byte
}

// Sensitivity holds the derivatives of a chain with respect to one
// parameter: of every grid coordinate (laid out like ChainData.Grid), of
// every transition probability (like Transition) and of the stationary
// distribution.
type Sensitivity struct {
	Param      string
	Grid       []float64
	Transition []float64
	Stationary []float64
}

// States returns the number of states.
func (c *ChainData) States() int {
	if c.Dim == 0 {
		return 0
	}
	return len(c.Grid) / c.Dim
}

// ChainInput is one chain handed to Estimate: its reference, and its
// numbers when the stage asked for them inline.
type ChainInput struct {
	Ref  ChainRef
	Data *ChainData
}

// EstimateRequest asks a stage to solve a model on chains.
type EstimateRequest struct {
	Model  string
	Params map[string]float64
	Chains []ChainInput
}

// Estimate is one result: named scalars and vectors, and the chain hash of
// every chain used to compute them.
type Estimate struct {
	Model       string
	ChainHashes []string
	Scalars     map[string]float64
	Vectors     map[string][]float64
}

// VersionedPlugins returns the plugin sets by protocol version for a stage
// implementation (nil on the host side, where only the types matter).
func VersionedPlugins(impl Stage) map[int]goplugin.PluginSet {
	return map[int]goplugin.PluginSet{
		ProtocolVersion: {PluginName: &GRPCPlugin{Impl: impl}},
	}
}
