package formats

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"hash"
)

// chainHasher accumulates the chain hash of one sweep point: SHA-256 over
// the numbers of its chains at every age (docs/HASHES.md, "Chain hash").
type chainHasher struct {
	h   hash.Hash
	buf []byte
}

func newChainHasher() *chainHasher {
	c := &chainHasher{h: sha256.New()}
	c.h.Write([]byte("gridstage chain hash v1\n"))
	return c
}

// add hashes one age: age, states n and dim as int32 little-endian; the
// grid (n·dim float64); 0x00 for a terminal age without transition, or
// 0x01 and the transition matrix (n·n float64, row-major); the matched
// counts (n int32); then 0x00 without an initial distribution or 0x01 and
// its n float64. Floats are hashed as in the content hash.
func (c *chainHasher) add(age, n, dim int, grid, trans []float64, matched []int32, initial []float64) {
	b := c.buf[:0]
	b = binary.LittleEndian.AppendUint32(b, uint32(int32(age)))
	b = binary.LittleEndian.AppendUint32(b, uint32(int32(n)))
	b = binary.LittleEndian.AppendUint32(b, uint32(int32(dim)))
	for _, v := range grid {
		b = binary.LittleEndian.AppendUint64(b, floatBits(v))
	}
	if trans == nil {
		b = append(b, 0)
	} else {
		b = append(b, 1)
		for _, v := range trans {
			b = binary.LittleEndian.AppendUint64(b, floatBits(v))
		}
	}
	for _, m := range matched {
		b = binary.LittleEndian.AppendUint32(b, uint32(m))
	}
	if initial == nil {
		b = append(b, 0)
	} else {
		b = append(b, 1)
		for _, v := range initial {
			b = binary.LittleEndian.AppendUint64(b, floatBits(v))
		}
	}
	c.h.Write(b)
	c.buf = b[:0]
}

func (c *chainHasher) sum() string { return hex.EncodeToString(c.h.Sum(nil)) }

// ChainHash returns the chain hash of one sweep point given its records
// (one per age, in increasing age order). It is the value written in the
// points table's chain_hash column, and identifies the numbers of the
// point's chains independently of how they are stored.
func ChainHash(ages []Record) string {
	c := newChainHasher()
	for _, r := range ages {
		m := make([]int32, len(r.Chain.Matched))
		for i, v := range r.Chain.Matched {
			m[i] = int32(v)
		}
		c.add(r.Age, r.Chain.States(), r.Chain.Dim, r.Chain.Grid, r.Chain.Transition, m, r.Initial)
	}
	return c.sum()
}

// specDigest accumulates the digest of a set's per-point spec hashes:
// SHA-256 over "gridstage spec digest v1\n" and one line "<point> <spec
// hash>\n" per point in order.
type specDigest struct{ h hash.Hash }

func newSpecDigest() *specDigest {
	d := &specDigest{h: sha256.New()}
	d.h.Write([]byte("gridstage spec digest v1\n"))
	return d
}

func (d *specDigest) add(point int, specHash string) { fmt.Fprintf(d.h, "%d %s\n", point, specHash) }
func (d *specDigest) sum() string                    { return hex.EncodeToString(d.h.Sum(nil)) }
