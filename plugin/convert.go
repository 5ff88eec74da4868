package plugin

import (
	"gridstage/plugin/stagepb"
)

// The conversions between protocol messages and Go types; grpc.go is their
// only user.

func descriptionToProto(d Description) *stagepb.Description {
	p := &stagepb.Description{Name: d.Name, Version: d.Version, Capabilities: d.Capabilities, Models: d.Models}
	for _, v := range d.ProtocolVersions {
		p.ProtocolVersions = append(p.ProtocolVersions, uint32(v))
	}
	return p
}

func descriptionFromProto(p *stagepb.Description) Description {
	d := Description{Name: p.GetName(), Version: p.GetVersion(), Capabilities: p.GetCapabilities(), Models: p.GetModels()}
	for _, v := range p.GetProtocolVersions() {
		d.ProtocolVersions = append(d.ProtocolVersions, int(v))
	}
	return d
}

func refToProto(r ChainRef) *stagepb.ChainRef {
	return &stagepb.ChainRef{
		Path: r.Path, Process: r.Process, Point: uint32(r.Point),
		ChainHash: r.ChainHash, SpecHash: r.SpecHash, ManifestHash: r.ManifestHash,
		FileHash: r.FileHash, Params: r.Params,
	}
}

func refFromProto(p *stagepb.ChainRef) ChainRef {
	return ChainRef{
		Path: p.GetPath(), Process: p.GetProcess(), Point: int(p.GetPoint()),
		ChainHash: p.GetChainHash(), SpecHash: p.GetSpecHash(), ManifestHash: p.GetManifestHash(),
		FileHash: p.GetFileHash(), Params: p.GetParams(),
	}
}

func dataToProto(d *ChainData) *stagepb.ChainData {
	p := &stagepb.ChainData{Dim: uint32(d.Dim), Grid: d.Grid, Transition: d.Transition, HasInitial: d.Initial != nil, Initial: d.Initial}
	for _, m := range d.Matched {
		p.Matched = append(p.Matched, int32(m))
	}
	for _, s := range d.Sensitivities {
		p.Sensitivities = append(p.Sensitivities, &stagepb.ChainSensitivity{Param: s.Param, Grid: s.Grid, Transition: s.Transition, Stationary: s.Stationary})
	}
	return p
}

func dataFromProto(p *stagepb.ChainData) *ChainData {
	d := &ChainData{Dim: int(p.GetDim()), Grid: p.GetGrid(), Transition: p.GetTransition()}
	for _, m := range p.GetMatched() {
		d.Matched = append(d.Matched, int(m))
	}
	for _, s := range p.GetSensitivities() {
		d.Sensitivities = append(d.Sensitivities, Sensitivity{Param: s.GetParam(), Grid: s.GetGrid(), Transition: s.GetTransition(), Stationary: s.GetStationary()})
	}
	if p.GetHasInitial() {
		d.Initial = p.GetInitial()
		if d.Initial == nil {
			d.Initial = []float64{}
		}
	}
	return d
}

func estimateToProto(e Estimate) *stagepb.Estimate {
	p := &stagepb.Estimate{Model: e.Model, ChainHashes: e.ChainHashes, Scalars: e.Scalars}
	if len(e.Vectors) > 0 {
		p.Vectors = make(map[string]*stagepb.Vector, len(e.Vectors))
		for k, v := range e.Vectors {
			p.Vectors[k] = &stagepb.Vector{Values: v}
		}
	}
	return p
}

func estimateFromProto(p *stagepb.Estimate) Estimate {
	e := Estimate{Model: p.GetModel(), ChainHashes: p.GetChainHashes(), Scalars: p.GetScalars()}
	if len(p.GetVectors()) > 0 {
		e.Vectors = make(map[string][]float64, len(p.GetVectors()))
		for k, v := range p.GetVectors() {
			e.Vectors[k] = v.GetValues()
		}
	}
	return e
}
