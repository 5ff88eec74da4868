package plugin

import (
	"context"
	"errors"
	"fmt"
)

// ChainLoader reads the chain a reference points to. Implementations check
// that the file still has the reference's content hash and the chain its
// chain hash, and return ErrChainMismatch (wrapped, naming the file) when
// either differs.
type ChainLoader interface {
	Load(ctx context.Context, ref ChainRef) (*ChainData, error)
}

// ErrChainMismatch reports a chain file or chain whose hash no longer
// matches the reference that named it.
var ErrChainMismatch = errors.New("plugin: chain does not match its reference")

// MismatchHash returns an error wrapping ErrChainMismatch.
func MismatchHash(what, path, want, got string) error {
	return fmt.Errorf("%w: %s of %s is %s, the reference says %s", ErrChainMismatch, what, path, short(got), short(want))
}

func short(h string) string {
	if len(h) > 16 {
		return h[:16] + "…"
	}
	return h
}
