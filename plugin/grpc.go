package plugin

import (
	"context"
	"errors"
	"fmt"
	"io"

	goplugin "github.com/hashicorp/go-plugin"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	"gridstage/plugin/stagepb"
)

// GRPCPlugin is the go-plugin glue for the stage protocol: on the stage side
// it registers Impl with the gRPC server, on the host side it returns a
// Stage that calls the remote one.
type GRPCPlugin struct {
	goplugin.NetRPCUnsupportedPlugin
	Impl Stage // the implementation; nil on the host side
}

var _ goplugin.GRPCPlugin = (*GRPCPlugin)(nil)

// GRPCServer registers the stage implementation.
func (p *GRPCPlugin) GRPCServer(_ *goplugin.GRPCBroker, s *grpc.Server) error {
	stagepb.RegisterStageServer(s, &grpcServer{impl: p.Impl})
	return nil
}

// GRPCClient returns a Stage backed by the connection.
func (p *GRPCPlugin) GRPCClient(_ context.Context, _ *goplugin.GRPCBroker, c *grpc.ClientConn) (any, error) {
	return &grpcClient{client: stagepb.NewStageClient(c)}, nil
}

// arrowChunkSize bounds each Arrow IPC chunk well below gRPC's default
// 4 MiB message limit.
const arrowChunkSize = 1 << 20

// grpcServer adapts a Stage to the generated server interface.
type grpcServer struct {
	stagepb.UnimplementedStageServer
	impl Stage
}

func (s *grpcServer) Describe(ctx context.Context, _ *stagepb.DescribeRequest) (*stagepb.Description, error) {
	d, err := s.impl.Describe(ctx)
	if err != nil {
		return nil, toStatus(err)
	}
	return descriptionToProto(d), nil
}

func (s *grpcServer) Health(ctx context.Context, _ *stagepb.HealthRequest) (*stagepb.HealthReply, error) {
	if err := s.impl.Health(ctx); err != nil {
		return &stagepb.HealthReply{Serving: false, Detail: err.Error()}, nil
	}
	return &stagepb.HealthReply{Serving: true}, nil
}

func (s *grpcServer) Discretize(req *stagepb.DiscretizeRequest, stream grpc.ServerStreamingServer[stagepb.DiscretizeReply]) error {
	r := DiscretizeRequest{
		Manifest:    req.GetManifest(),
		JobSpec:     req.GetJobSpec(),
		SourceName:  req.GetSourceName(),
		OutDir:      req.GetOutDir(),
		StreamArrow: req.GetStreamArrow(),
	}
	d, err := s.impl.Discretize(stream.Context(), r)
	if err != nil {
		return toStatus(err)
	}
	for _, ref := range d.Chains {
		if err := stream.Send(&stagepb.DiscretizeReply{Item: &stagepb.DiscretizeReply_Chain{Chain: refToProto(ref)}}); err != nil {
			return err
		}
		data, ok := d.Arrow[ref.ChainHash]
		if !r.StreamArrow || !ok {
			continue
		}
		for off := 0; ; off += arrowChunkSize {
			end := min(off+arrowChunkSize, len(data))
			chunk := &stagepb.ArrowChunk{ChainHash: ref.ChainHash, Data: data[off:end], Last: end == len(data)}
			if err := stream.Send(&stagepb.DiscretizeReply{Item: &stagepb.DiscretizeReply_Arrow{Arrow: chunk}}); err != nil {
				return err
			}
			if end == len(data) {
				break
			}
		}
	}
	return nil
}

func (s *grpcServer) Estimate(ctx context.Context, req *stagepb.EstimateRequest) (*stagepb.EstimateReply, error) {
	r := EstimateRequest{Model: req.GetModel(), Params: req.GetParams()}
	for _, c := range req.GetChains() {
		in := ChainInput{Ref: refFromProto(c.GetRef())}
		if c.GetData() != nil {
			in.Data = dataFromProto(c.GetData())
		}
		r.Chains = append(r.Chains, in)
	}
	es, err := s.impl.Estimate(ctx, r)
	if err != nil {
		return nil, toStatus(err)
	}
	out := &stagepb.EstimateReply{}
	for _, e := range es {
		out.Estimates = append(out.Estimates, estimateToProto(e))
	}
	return out, nil
}

// grpcClient adapts the generated client to Stage.
type grpcClient struct{ client stagepb.StageClient }

func (c *grpcClient) Describe(ctx context.Context) (Description, error) {
	req := &stagepb.DescribeRequest{}
	for _, v := range ProtocolVersions {
		req.HostProtocolVersions = append(req.HostProtocolVersions, uint32(v))
	}
	d, err := c.client.Describe(ctx, req)
	if err != nil {
		return Description{}, fromStatus(err)
	}
	return descriptionFromProto(d), nil
}

func (c *grpcClient) Health(ctx context.Context) error {
	h, err := c.client.Health(ctx, &stagepb.HealthRequest{})
	if err != nil {
		return fromStatus(err)
	}
	if !h.GetServing() {
		detail := h.GetDetail()
		if detail == "" {
			detail = "no reason given"
		}
		return fmt.Errorf("plugin: stage is not serving: %s", detail)
	}
	return nil
}

func (c *grpcClient) Discretize(ctx context.Context, r DiscretizeRequest) (*Discretization, error) {
	req := &stagepb.DiscretizeRequest{SourceName: r.SourceName, OutDir: r.OutDir, StreamArrow: r.StreamArrow}
	switch {
	case r.Manifest != nil && r.JobSpec != nil:
		return nil, fmt.Errorf("plugin: a discretize request takes a manifest or a job spec, not both")
	case r.Manifest != nil:
		req.Input = &stagepb.DiscretizeRequest_Manifest{Manifest: r.Manifest}
	case r.JobSpec != nil:
		req.Input = &stagepb.DiscretizeRequest_JobSpec{JobSpec: r.JobSpec}
	default:
		return nil, fmt.Errorf("plugin: a discretize request needs a manifest or a job spec")
	}
	stream, err := c.client.Discretize(ctx, req)
	if err != nil {
		return nil, fromStatus(err)
	}
	out := &Discretization{}
	open := map[string]bool{} // announced chains whose Arrow stream is not finished
	for {
		msg, err := stream.Recv()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fromStatus(err)
		}
		switch item := msg.GetItem().(type) {
		case *stagepb.DiscretizeReply_Chain:
			ref := refFromProto(item.Chain)
			out.Chains = append(out.Chains, ref)
			open[ref.ChainHash] = true
		case *stagepb.DiscretizeReply_Arrow:
			h := item.Arrow.GetChainHash()
			if !open[h] {
				return nil, fmt.Errorf("plugin: stage sent Arrow data for chain %q it did not announce, or after its last chunk", h)
			}
			if out.Arrow == nil {
				out.Arrow = map[string][]byte{}
			}
			out.Arrow[h] = append(out.Arrow[h], item.Arrow.GetData()...)
			if item.Arrow.GetLast() {
				open[h] = false
			}
		default:
			return nil, fmt.Errorf("plugin: stage sent an empty discretize reply")
		}
	}
	if r.StreamArrow {
		for _, ref := range out.Chains {
			if open[ref.ChainHash] {
				return nil, fmt.Errorf("plugin: stage did not finish the Arrow stream of chain %s", ref.ChainHash)
			}
		}
	}
	return out, nil
}

func (c *grpcClient) Estimate(ctx context.Context, r EstimateRequest) ([]Estimate, error) {
	req := &stagepb.EstimateRequest{Model: r.Model, Params: r.Params}
	for _, in := range r.Chains {
		ci := &stagepb.ChainInput{Ref: refToProto(in.Ref)}
		if in.Data != nil {
			ci.Data = dataToProto(in.Data)
		}
		req.Chains = append(req.Chains, ci)
	}
	rep, err := c.client.Estimate(ctx, req)
	if err != nil {
		return nil, fromStatus(err)
	}
	var out []Estimate
	for _, e := range rep.GetEstimates() {
		out = append(out, estimateFromProto(e))
	}
	return out, nil
}

// toStatus maps a stage's error to a gRPC status, keeping its message.
func toStatus(err error) error {
	code := codes.Internal
	switch {
	case errors.Is(err, ErrUnsupported):
		code = codes.Unimplemented
	case errors.Is(err, ErrBadRequest):
		code = codes.InvalidArgument
	case errors.Is(err, context.Canceled):
		code = codes.Canceled
	case errors.Is(err, context.DeadlineExceeded):
		code = codes.DeadlineExceeded
	}
	return status.Error(code, err.Error())
}

// RemoteError is an error the stage returned or the connection reported,
// with its gRPC code.
type RemoteError struct {
	Code codes.Code
	Msg  string
}

func (e *RemoteError) Error() string { return e.Msg }

// Unwrap lets errors.Is match the sentinels the code stands for.
func (e *RemoteError) Unwrap() error {
	switch e.Code {
	case codes.Unimplemented:
		return ErrUnsupported
	case codes.InvalidArgument:
		return ErrBadRequest
	case codes.DeadlineExceeded:
		return context.DeadlineExceeded
	case codes.Canceled:
		return context.Canceled
	}
	return nil
}

// fromStatus turns a gRPC error back into a Go error.
func fromStatus(err error) error {
	st, ok := status.FromError(err)
	if !ok {
		return err
	}
	return &RemoteError{Code: st.Code(), Msg: st.Message()}
}
