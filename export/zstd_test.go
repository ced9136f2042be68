package export

import (
	"bytes"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"github.com/apache/arrow/go/v17/parquet/compress"
)

// The zstd codec the Parquet writer uses is reusedZstd, and its pages are
// byte for byte those of arrow's own codec (a new encoder per page, arrow
// go v17 parquet/compress/zstd.go), at the default and other levels, for
// pages of floats, repeated text and random bytes, one after the other and
// from several goroutines at once; and they decode to the page.
func TestZstdReuseSameBytes(t *testing.T) {
	c, err := compress.GetCodec(compress.Codecs.Zstd)
	if err != nil {
		t.Fatal(err)
	}
	r, ok := c.(reusedZstd)
	if !ok {
		t.Fatalf("the registered zstd codec is %T, not reusedZstd", c)
	}
	rng := rand.New(rand.NewPCG(7, 9))
	var pages [][]byte
	for k := 0; k < 6; k++ {
		var b bytes.Buffer
		for i := 0; i < 20000; i++ {
			switch k % 3 {
			case 0:
				v := math.Float64bits(math.Sin(float64(i)*0.01) * 3)
				for s := 0; s < 64; s += 8 {
					b.WriteByte(byte(v >> s))
				}
			case 1:
				b.WriteString("low_coverage,design_few_data;")
			default:
				b.WriteByte(byte(rng.Uint32()))
			}
		}
		pages = append(pages, b.Bytes())
	}
	for _, level := range []int{compress.DefaultCompressionLevel, 1, 7} {
		var wg sync.WaitGroup
		for rep := 0; rep < 2; rep++ {
			for _, p := range pages {
				wg.Add(1)
				go func() {
					defer wg.Done()
					want := r.Codec.EncodeLevel(nil, p, level)
					got := r.EncodeLevel(make([]byte, 0, r.CompressBound(int64(len(p)))), p, level)
					if !bytes.Equal(got, want) {
						t.Errorf("level %d, page of %d bytes: %d bytes against arrow's %d", level, len(p), len(got), len(want))
					}
					if back := r.Decode(nil, got); !bytes.Equal(back, p) {
						t.Errorf("level %d: the page does not decode to itself", level)
					}
				}()
			}
		}
		wg.Wait()
	}
}
