package export

import (
	"sync"

	"github.com/apache/arrow/go/v17/parquet/compress"
	"github.com/klauspost/compress/zstd"
)

// Arrow's Parquet writer compresses every data page with
// compress.Codec.EncodeLevel, and its zstd codec (arrow go v17,
// parquet/compress/zstd.go) makes a new zstd.Encoder for each page: the
// encoder's window and tables (several MiB, cleared on allocation) then
// cost far more than compressing the page, and bound the table writers
// to about 0.1 M rows/s. reusedZstd is that codec with one encoder per
// level, made once and reused (zstd.Encoder.EncodeAll may be called
// concurrently and starts every frame afresh, so the bytes are those of
// a new encoder with the same options: TestZstdReuseSameBytes). Decoding
// and the streaming writers stay arrow's.
type reusedZstd struct {
	compress.Codec // arrow's zstd codec
}

var zstdEncoders sync.Map // zstd.EncoderLevel -> *zstd.Encoder

func init() {
	c, err := compress.GetCodec(compress.Codecs.Zstd)
	if err != nil {
		panic("export: arrow has no zstd codec: " + err.Error())
	}
	compress.RegisterCodec(compress.Codecs.Zstd, reusedZstd{c})
}

// EncodeLevel is arrow's zstdCodec.EncodeLevel (the same options: zero
// frames, the level mapped by zstd.EncoderLevelFromZstd, the default level
// SpeedDefault) with the encoder reused.
func (reusedZstd) EncodeLevel(dst, src []byte, level int) []byte {
	l := zstd.EncoderLevelFromZstd(level)
	if level == compress.DefaultCompressionLevel {
		l = zstd.SpeedDefault
	}
	enc, ok := zstdEncoders.Load(l)
	if !ok {
		e, err := zstd.NewWriter(nil, zstd.WithZeroFrames(true), zstd.WithEncoderLevel(l))
		if err != nil {
			panic("export: zstd encoder: " + err.Error())
		}
		enc, _ = zstdEncoders.LoadOrStore(l, e)
	}
	return enc.(*zstd.Encoder).EncodeAll(src, dst[:0])
}
