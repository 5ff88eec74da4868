package plugin

import (
	"bytes"
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"gridstage/formats"
)

// Schema metadata keys of a streamed chain.
const (
	arrowKeyChainHash = "gridstage.chain_hash"
	arrowKeySpecHash  = "gridstage.spec_hash"
)

// ChainArrow encodes a time-invariant chain as an Arrow IPC stream for
// Discretize's streaming option: one row per from-state with columns state
// (int32), x0..x{dim-1} (float64), matched (int32) and transition
// (list<float64>, the row of the transition matrix), and the chain and spec
// hashes in the schema metadata. Any Arrow library reads it.
func ChainArrow(ref ChainRef, d *ChainData, mem memory.Allocator) ([]byte, error) {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	n := d.States()
	fields := []arrow.Field{{Name: "state", Type: arrow.PrimitiveTypes.Int32}}
	for k := 0; k < d.Dim; k++ {
		fields = append(fields, arrow.Field{Name: formats.LevelColumn(k), Type: arrow.PrimitiveTypes.Float64})
	}
	fields = append(fields,
		arrow.Field{Name: "matched", Type: arrow.PrimitiveTypes.Int32},
		arrow.Field{Name: "transition", Type: arrow.ListOf(arrow.PrimitiveTypes.Float64)})
	md := arrow.NewMetadata([]string{arrowKeyChainHash, arrowKeySpecHash}, []string{ref.ChainHash, ref.SpecHash})
	schema := arrow.NewSchema(fields, &md)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	for i := 0; i < n; i++ {
		b.Field(0).(*array.Int32Builder).Append(int32(i))
		for k := 0; k < d.Dim; k++ {
			b.Field(1 + k).(*array.Float64Builder).Append(d.Grid[i*d.Dim+k])
		}
		m := 0
		if i < len(d.Matched) {
			m = d.Matched[i]
		}
		b.Field(1 + d.Dim).(*array.Int32Builder).Append(int32(m))
		lb := b.Field(2 + d.Dim).(*array.ListBuilder)
		lb.Append(true)
		lb.ValueBuilder().(*array.Float64Builder).AppendValues(d.Transition[i*n:(i+1)*n], nil)
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(schema), ipc.WithAllocator(mem))
	if err := w.Write(rec); err != nil {
		return nil, fmt.Errorf("plugin: encode chain %s as Arrow: %w", ref.ChainHash, err)
	}
	if err := w.Close(); err != nil {
		return nil, fmt.Errorf("plugin: encode chain %s as Arrow: %w", ref.ChainHash, err)
	}
	return buf.Bytes(), nil
}

// ReadChainArrow decodes a stream written by ChainArrow and returns the
// chain and the chain hash its metadata names.
func ReadChainArrow(b []byte, mem memory.Allocator) (*ChainData, string, error) {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	r, err := ipc.NewReader(bytes.NewReader(b), ipc.WithAllocator(mem))
	if err != nil {
		return nil, "", fmt.Errorf("plugin: not an Arrow IPC stream: %w", err)
	}
	defer r.Release()
	schema := r.Schema()
	hash, _ := schema.Metadata().GetValue(arrowKeyChainHash)
	nf := schema.NumFields()
	dim := nf - 3
	if dim < 1 || schema.Field(0).Name != "state" || schema.Field(nf-1).Name != "transition" {
		return nil, "", fmt.Errorf("plugin: the Arrow stream is not a streamed chain (fields %v)", schema.Fields())
	}
	d := &ChainData{Dim: dim}
	for r.Next() {
		rec := r.RecordBatch()
		rows := int(rec.NumRows())
		list := rec.Column(nf - 1).(*array.List)
		vals := list.ListValues().(*array.Float64)
		offs := list.Offsets()
		for i := 0; i < rows; i++ {
			for k := 0; k < dim; k++ {
				d.Grid = append(d.Grid, rec.Column(1+k).(*array.Float64).Value(i))
			}
			d.Matched = append(d.Matched, int(rec.Column(1+dim).(*array.Int32).Value(i)))
			for j := offs[i]; j < offs[i+1]; j++ {
				d.Transition = append(d.Transition, vals.Value(int(j)))
			}
		}
	}
	if err := r.Err(); err != nil {
		return nil, "", fmt.Errorf("plugin: read Arrow stream: %w", err)
	}
	if n := d.States(); len(d.Transition) != n*n {
		return nil, "", fmt.Errorf("plugin: the Arrow stream has %d states but %d transition entries", n, len(d.Transition))
	}
	return d, hash, nil
}
