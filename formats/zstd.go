package formats

import (
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/klauspost/compress/zstd"
)

// leanZstd is the Parquet library's zstd codec with encoders that allocate
// their history buffer at the size they need: the library's own pool makes
// encoders that each hold 16 MiB (twice the 8 MiB window) whatever the
// page size, and a run compresses several tables at once. The compressed
// bytes are the same: the encoder options are the library's, plus
// zstd.WithLowerEncoderMem, which changes only how buffers are sized
// (github.com/klauspost/compress/zstd, enc_base.go and blockenc.go), as the
// byte-identity tests of batch and formats check.
type leanZstd struct {
	compress.Codec // the library's codec: decoding and streams
}

// leanEncoders keeps a few idle encoders across garbage collections
// (a sync.Pool would drop them at each and rebuild them).
var leanEncoders = make(chan *zstd.Encoder, 4)

func (c leanZstd) Encode(dst, src []byte) []byte {
	return c.EncodeLevel(dst, src, compress.DefaultCompressionLevel)
}

// EncodeLevel compresses src as the library's codec does at that level.
func (leanZstd) EncodeLevel(dst, src []byte, level int) []byte {
	lvl := zstd.EncoderLevelFromZstd(level)
	if level == compress.DefaultCompressionLevel {
		lvl = zstd.SpeedDefault
	}
	var enc *zstd.Encoder
	if lvl == zstd.SpeedDefault {
		select {
		case enc = <-leanEncoders:
		default:
		}
	}
	if enc == nil {
		var err error
		enc, err = zstd.NewWriter(nil, zstd.WithZeroFrames(true), zstd.WithEncoderLevel(lvl), zstd.WithEncoderConcurrency(1),
			zstd.WithAllLitEntropyCompression(true), zstd.WithLowerEncoderMem(true))
		if err != nil {
			panic("formats: zstd encoder: " + err.Error()) // the options are constants
		}
	}
	out := enc.EncodeAll(src, dst[:0])
	if lvl == zstd.SpeedDefault {
		select {
		case leanEncoders <- enc:
		default:
		}
	}
	return out
}

func init() {
	lib, err := compress.GetCodec(compress.Codecs.Zstd)
	if err != nil {
		panic("formats: the Parquet library has no zstd codec")
	}
	compress.RegisterCodec(compress.Codecs.Zstd, leanZstd{Codec: lib})
}
