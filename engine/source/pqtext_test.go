package source

import (
	"encoding/binary"
	"math"
	"slices"
	"testing"
)

// packBits packs values of width bits, bit by bit, from the least
// significant bit of each byte on (the bit-packed runs of the Parquet
// hybrid encoding), padded to whole bytes.
func packBits(values []uint32, width int) []byte {
	out := make([]byte, (len(values)*width+7)/8)
	for i, v := range values {
		for b := range width {
			if v>>b&1 == 1 {
				bit := i*width + b
				out[bit/8] |= 1 << (bit % 8)
			}
		}
	}
	return out
}

// hybridRun is one run of a test encoding: repeat times value when
// packed is nil, else the packed values (a multiple of 8).
type hybridRun struct {
	repeat int
	value  uint32
	packed []uint32
}

// encodeHybrid writes runs in the RLE / bit-packing hybrid encoding.
func encodeHybrid(runs []hybridRun, width int) []byte {
	var out []byte
	for _, r := range runs {
		if r.packed == nil {
			out = binary.AppendUvarint(out, uint64(r.repeat)<<1)
			for i := range (width + 7) / 8 {
				out = append(out, byte(r.value>>(8*i)))
			}
			continue
		}
		out = binary.AppendUvarint(out, uint64(len(r.packed)/8)<<1|1)
		out = append(out, packBits(r.packed, width)...)
	}
	return out
}

// seq returns n values i*step mod 1<<width.
func seq(n, step, width int) []uint32 {
	out := make([]uint32, n)
	for i := range out {
		out[i] = uint32(uint64(i*step) % (1 << width))
	}
	return out
}

// TestHybrid decodes runs of every kind and width, read in pieces of
// several sizes (so that reads stop inside runs), and refuses data that
// ends before the values asked for.
func TestHybrid(t *testing.T) {
	tests := []struct {
		name  string
		width int
		runs  []hybridRun
	}{
		{"repeated, width 3", 3, []hybridRun{{repeat: 5, value: 6}, {repeat: 1, value: 0}}},
		{"packed, width 1", 1, []hybridRun{{packed: seq(16, 1, 1)}}},
		{"mixed, width 3", 3, []hybridRun{{packed: seq(8, 3, 3)}, {repeat: 300, value: 7}, {packed: seq(24, 5, 3)}}},
		{"mixed, width 14", 14, []hybridRun{{repeat: 2, value: 10000}, {packed: seq(64, 977, 14)}, {repeat: 9, value: 16383}}},
		{"packed, width 11 (odd: groups split inside a byte)", 11, []hybridRun{{packed: seq(40, 37, 11)}, {repeat: 3, value: 2047}, {packed: seq(16, 5, 11)}}},
		{"packed, width 16", 16, []hybridRun{{packed: seq(32, 4099, 16)}}},
		{"packed, width 7", 7, []hybridRun{{packed: seq(48, 29, 7)}}},
		{"width 0", 0, []hybridRun{{repeat: 4}, {packed: make([]uint32, 8)}}},
		{"width 32", 32, []hybridRun{{packed: seq(8, 0x7fffffff, 32)}, {repeat: 3, value: 1 << 31}}},
		{"empty runs", 5, []hybridRun{{repeat: 0, value: 3}, {packed: []uint32{}}, {repeat: 2, value: 31}}},
	}
	for _, tc := range tests {
		data := encodeHybrid(tc.runs, tc.width)
		var want []int32
		for _, r := range tc.runs {
			if r.packed == nil {
				for range r.repeat {
					want = append(want, int32(r.value))
				}
			}
			for _, v := range r.packed {
				want = append(want, int32(v))
			}
		}
		for _, piece := range []int{1, 3, 8, 1000} {
			h := hybrid{buf: data, width: uint(tc.width)}
			var got []int32
			for len(got) < len(want) {
				out := make([]int32, min(piece, len(want)-len(got)))
				if err := h.read(out); err != nil {
					t.Fatalf("%s, pieces of %d: after %d values: %v", tc.name, piece, len(got), err)
				}
				got = append(got, out...)
			}
			if !slices.Equal(got, want) {
				t.Errorf("%s, pieces of %d:\n got %v\nwant %v", tc.name, piece, got, want)
			}
			if err := h.read(make([]int32, 1)); err == nil {
				t.Errorf("%s: a value read past the data", tc.name)
			}
		}
	}
}

// TestHybridDamaged checks that data cut short or with a bad header gives
// an error.
func TestHybridDamaged(t *testing.T) {
	packed := encodeHybrid([]hybridRun{{packed: seq(16, 3, 5)}}, 5)
	tests := []struct {
		name  string
		data  []byte
		width uint
		n     int
	}{
		{"no header", nil, 3, 1},
		{"header cut short", []byte{0x80}, 3, 1},
		{"repeated value missing", []byte{10}, 9, 1},
		{"packed run cut short", packed[:len(packed)-3], 5, 16},
		{"run shorter than the values", encodeHybrid([]hybridRun{{repeat: 3, value: 1}}, 2), 2, 4},
		{"huge run", binary.AppendUvarint(nil, 1<<62|1), 4, 8},
		{"repeated value too wide", []byte{2, 8}, 3, 1},
	}
	for _, tc := range tests {
		h := hybrid{buf: tc.data, width: tc.width}
		if err := h.read(make([]int32, tc.n)); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

// slowHybrid decodes n values of the hybrid encoding one bit at a time,
// as the reference of FuzzHybrid; ok is false when the data end first,
// or hold a repeated value wider than width, or a run longer than hybrid
// takes (2^31-1 values repeated, 2^31-8 packed).
func slowHybrid(data []byte, width, n int) (vals []int32, ok bool) {
	for len(vals) < n {
		hdr, k := binary.Uvarint(data)
		if k <= 0 || hdr&1 == 0 && hdr>>1 > math.MaxInt32 || hdr&1 == 1 && hdr>>1 > math.MaxInt32/8 {
			return nil, false
		}
		data = data[k:]
		if hdr&1 == 0 {
			nb := (width + 7) / 8
			if len(data) < nb {
				return nil, false
			}
			var v uint64
			for i := range nb {
				v |= uint64(data[i]) << (8 * i)
			}
			if width < 32 && v>>width != 0 {
				return nil, false
			}
			data = data[nb:]
			for range min(int(hdr>>1), n-len(vals)) {
				vals = append(vals, int32(v))
			}
			continue
		}
		count := int(hdr>>1) * 8
		for i := 0; i < count && len(vals) < n; i++ {
			var v uint32
			for b := range width {
				bit := i*width + b
				if bit/8 >= len(data) {
					return nil, false
				}
				v |= uint32(data[bit/8]>>(bit%8)&1) << b
			}
			vals = append(vals, int32(v))
		}
		data = data[min(len(data), int(hdr>>1)*width):]
	}
	return vals, true
}

// FuzzHybrid decodes arbitrary bytes at every width, in pieces of a
// fuzzed size, and compares the values with slowHybrid's: never a panic,
// an error exactly when slowHybrid fails, the same values otherwise.
func FuzzHybrid(f *testing.F) {
	f.Add(encodeHybrid([]hybridRun{{packed: seq(8, 3, 3)}, {repeat: 300, value: 7}}, 3), uint8(3), uint16(50), uint8(7))
	f.Add(encodeHybrid([]hybridRun{{repeat: 2, value: 10000}, {packed: seq(64, 977, 14)}}, 14), uint8(14), uint16(66), uint8(5))
	f.Add(encodeHybrid([]hybridRun{{packed: seq(40, 37, 11)}}, 11), uint8(11), uint16(40), uint8(3))
	f.Fuzz(func(t *testing.T, data []byte, width uint8, n uint16, piece uint8) {
		w := int(width % 33)
		want, ok := slowHybrid(data, w, int(n))
		h := hybrid{buf: data, width: uint(w)}
		got := make([]int32, 0, n)
		var err error
		for len(got) < int(n) && err == nil {
			out := make([]int32, min(int(piece)+1, int(n)-len(got)))
			if err = h.read(out); err == nil {
				got = append(got, out...)
			}
		}
		if (err == nil) != ok {
			t.Fatalf("error %v; the reference decodes: %v", err, ok)
		}
		if ok && !slices.Equal(got, want) {
			t.Fatalf("got %v\nwant %v", got, want)
		}
	})
}
