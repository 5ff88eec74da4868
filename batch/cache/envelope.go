package cache

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
)

// An entry file is, byte for byte:
//
//	offset  size  field
//	0       8     magic "GSCACHE1"
//	8       32    key, the spec hash as raw bytes
//	40      32    fingerprint of the stored Go type
//	72      8     payload length n, unsigned little-endian
//	80      n     payload (codec.go)
//	80+n    32    SHA-256 of bytes 0 … 80+n-1
//
// The file is exactly 112+n bytes long; anything else is damage.

const (
	magic      = "GSCACHE1"
	headerSize = 8 + 32 + 32 + 8
	sumSize    = sha256.Size
)

// seal wraps a payload in an envelope.
func seal(key [32]byte, fp [32]byte, payload []byte) []byte {
	b := make([]byte, 0, headerSize+len(payload)+sumSize)
	b = append(b, magic...)
	b = append(b, key[:]...)
	b = append(b, fp[:]...)
	b = binary.LittleEndian.AppendUint64(b, uint64(len(payload)))
	b = append(b, payload...)
	sum := sha256.Sum256(b)
	return append(b, sum[:]...)
}

// errStale marks an intact entry written for a type of another layout.
var errStale = fmt.Errorf("cache: entry holds a type of another layout")

// open checks an envelope read from disk and returns its payload. It
// returns errStale for an intact entry of another type layout, and a
// description of the damage otherwise.
func open(b []byte, key [32]byte, fp [32]byte) ([]byte, error) {
	if len(b) < headerSize+sumSize {
		return nil, fmt.Errorf("%d bytes, shorter than an empty entry (%d)", len(b), headerSize+sumSize)
	}
	if string(b[:8]) != magic {
		return nil, fmt.Errorf("does not start with %q", magic)
	}
	n := binary.LittleEndian.Uint64(b[72:80])
	if n != uint64(len(b)-headerSize-sumSize) {
		return nil, fmt.Errorf("%d bytes, but its header announces %d", len(b), uint64(headerSize+sumSize)+n)
	}
	body := b[:len(b)-sumSize]
	if sum := sha256.Sum256(body); !bytes.Equal(sum[:], b[len(body):]) {
		return nil, fmt.Errorf("checksum mismatch")
	}
	if !bytes.Equal(b[8:40], key[:]) {
		return nil, fmt.Errorf("holds key %s", hex.EncodeToString(b[8:40]))
	}
	if !bytes.Equal(b[40:72], fp[:]) {
		return nil, errStale
	}
	return b[headerSize:len(body)], nil
}
