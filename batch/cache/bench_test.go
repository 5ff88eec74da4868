package cache

import (
	"fmt"
	"testing"
)

// benchPut times storing a 21-state maximum-entropy chain with its
// diagnostics, the size an estimation sweep stores per job.
func benchPut(b *testing.B, sync bool) {
	c, err := Open(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	c.Sync = sync
	v := solve21(b)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := c.Put(key(fmt.Sprint(i)), &v); err != nil {
			b.Fatal(err)
		}
	}
}

func solve21(b *testing.B) solved {
	v := solve(b, 0.9)
	return v
}

func BenchmarkPut(b *testing.B)       { benchPut(b, false) }
func BenchmarkPutSynced(b *testing.B) { benchPut(b, true) }

func BenchmarkGet(b *testing.B) {
	c, err := Open(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	v := solve21(b)
	const keys = 1000
	for i := 0; i < keys; i++ {
		if err := c.Put(key(fmt.Sprint(i)), &v); err != nil {
			b.Fatal(err)
		}
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		var got solved
		if hit, err := c.Get(key(fmt.Sprint(i%keys)), &got); !hit || err != nil {
			b.Fatal(hit, err)
		}
	}
}

func BenchmarkEncode(b *testing.B) {
	v := solve21(b)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := marshal(&v); err != nil {
			b.Fatal(err)
		}
	}
}
