package runner

import (
	"context"
	"fmt"
	"testing"
)

// benchOverhead times the pool's own cost per job: work that does nothing
// and a sink that keeps nothing.
func benchOverhead(b *testing.B, workers int) {
	work := func(_ context.Context, i int) (int, error) { return i, nil }
	sink := func(int, int, error) error { return nil }
	b.ResetTimer()
	if _, err := Run(context.Background(), b.N, Options{Workers: workers}, work, sink); err != nil {
		b.Fatal(err)
	}
}

func BenchmarkOverhead(b *testing.B) {
	for _, w := range []int{1, 2, 8} {
		b.Run(fmt.Sprint("workers", w), func(b *testing.B) { benchOverhead(b, w) })
	}
}
