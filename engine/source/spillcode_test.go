package source

import (
	"context"
	"encoding/binary"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// TestPackDecimals packs columns of float64 values as int32 mantissas and
// checks the decimals found, the refusals and that every packed column
// comes back bit for bit.
func TestPackDecimals(t *testing.T) {
	sub := math.Float64frombits(1) // the least subnormal
	tests := []struct {
		name string
		x    []float64
		d    int // -1: not packed
	}{
		{"empty", nil, 0},
		{"integers", []float64{0, 1, -7, 2147483647, -2147483648}, 0},
		{"one decimal", []float64{1.5, -0.1, 3}, 1},
		{"mixed decimals", []float64{1.25, 0.1, 7, -3.125}, 3},
		{"later needs more", []float64{0.5, 1, 2.5, 0.001}, 3},
		{"nine decimals", []float64{0.123456789, 1e-9}, 9},
		{"ten decimals", []float64{1e-10}, -1},
		{"mantissa past int32", []float64{2147483648}, -1},
		{"mantissa past int32 at d", []float64{2.147483648}, -1},
		{"least int32 at d", []float64{-2.147483648, 0.5}, 9},
		{"fits at d, not at the batch's d", []float64{21474836.47, 0.001}, -1},
		{"negative zero", []float64{1, math.Copysign(0, -1)}, -1},
		{"NaN", []float64{math.NaN()}, -1},
		{"infinity", []float64{1, math.Inf(1)}, -1},
		{"minus infinity", []float64{math.Inf(-1)}, -1},
		{"subnormal", []float64{sub}, -1},
		{"largest float", []float64{math.MaxFloat64}, -1},
		{"third", []float64{1.0 / 3}, -1},
		{"near a decimal", []float64{math.Nextafter(0.1, 1)}, -1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := make([]int32, len(tc.x))
			d, ok := packDecimals(tc.x, m)
			if !ok {
				d = -1
			}
			if d != tc.d {
				t.Fatalf("decimals %d; want %d", d, tc.d)
			}
			if ok {
				sameFloats(t, unpackedDecimals(m, d), tc.x)
			}
		})
	}
}

// unpackedDecimals returns the values of mantissas m of d decimals.
func unpackedDecimals(m []int32, d int) []float64 {
	out := make([]float64, len(m))
	unpackDecimals(m, d, out)
	return out
}

// sameFloats fails t unless got and want hold the same bits.
func sameFloats(t *testing.T, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%d values; want %d", len(got), len(want))
	}
	for i := range got {
		if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
			t.Fatalf("value %d is %v (%#x); want %v (%#x)", i, got[i], math.Float64bits(got[i]), want[i], math.Float64bits(want[i]))
		}
	}
}

// TestPackDecimalsRandom packs values parsed from random decimal texts of
// 0..9 decimals, as a CSV column holds them: they must pack with the most
// decimals of the texts (or fewer where trailing zeros allow) and come
// back bit for bit.
func TestPackDecimalsRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for round := range 2000 {
		n := 1 + rng.IntN(50)
		most := rng.IntN(10)
		x := make([]float64, n)
		for i := range x {
			k := rng.IntN(most + 1)
			limit := int64(math.MaxInt32) / int64(pow10[most-k]) // the mantissa at most decimals fits int32
			m := rng.Int64N(2*limit+1) - limit
			if k == most && rng.IntN(4) == 0 { // the extremes of int32
				m = int64(math.MaxInt32 - rng.IntN(3))
				if rng.IntN(2) == 0 {
					m = math.MinInt32 + int64(rng.IntN(3))
				}
			}
			x[i] = parseDecimal(t, m, k)
		}
		m := make([]int32, n)
		d, ok := packDecimals(x, m)
		if !ok || d > most {
			t.Fatalf("round %d: %v packed: %v, with %d decimals; want at most %d", round, x, ok, d, most)
		}
		sameFloats(t, unpackedDecimals(m, d), x)
	}
}

// parseDecimal returns the float64 that strconv parses from the decimal
// text of m / 10^k.
func parseDecimal(t *testing.T, m int64, k int) float64 {
	t.Helper()
	s := strconv.FormatInt(m, 10)
	if k > 0 {
		neg := strings.HasPrefix(s, "-")
		s = strings.TrimPrefix(s, "-")
		s = strings.Repeat("0", max(0, k+1-len(s))) + s
		s = s[:len(s)-k] + "." + s[len(s)-k:]
		if neg {
			s = "-" + s
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestPackOffsets packs 64-bit integers as offsets from their least valid
// value and checks the bases, the refusals and the values read back, with
// null cells zero.
func TestPackOffsets(t *testing.T) {
	tests := []struct {
		name  string
		x     []int64
		nulls []int // the null cells
		base  int64
		ok    bool
	}{
		{"empty", nil, nil, 0, true},
		{"ids", []int64{5, 3, 4, 1 << 40}, nil, 0, false},
		{"large ids", []int64{1<<40 + 7, 1 << 40, 1<<40 + 65535}, nil, 1 << 40, true},
		{"negative", []int64{-1<<50 + 9, -1 << 50, -1<<50 + 100}, nil, -1 << 50, true},
		{"span 2^32-1", []int64{-1 << 31, 1<<32 - 1 - 1<<31}, nil, -1 << 31, true},
		{"span 2^32", []int64{-1 << 31, 1 << 31}, nil, 0, false},
		{"extremes", []int64{math.MinInt64, math.MaxInt64}, nil, 0, false},
		{"top", []int64{math.MaxInt64, math.MaxInt64 - 1<<32 + 1}, nil, math.MaxInt64 - 1<<32 + 1, true},
		{"bottom", []int64{math.MinInt64, math.MinInt64 + 1<<32 - 1}, nil, math.MinInt64, true},
		{"nulls out of the span", []int64{1 << 50, 0, 1<<50 + 9, 0}, []int{1, 3}, 1 << 50, true},
		{"all null", []int64{0, 0, 0}, []int{0, 1, 2}, 0, true},
		{"a null cell not zero", []int64{4, 5, 6}, []int{1}, 0, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var valid []byte
			if tc.nulls != nil {
				valid = make([]byte, bitutil.BytesForBits(int64(len(tc.x))))
				bitutil.SetBitsTo(valid, 0, int64(len(tc.x)), true)
				for _, i := range tc.nulls {
					bitutil.ClearBit(valid, i)
				}
			}
			m := make([]uint32, len(tc.x))
			base, ok := packOffsets(tc.x, valid, m)
			if ok != tc.ok || (ok && base != tc.base) {
				t.Fatalf("base %d, packed %v; want %d, %v", base, ok, tc.base, tc.ok)
			}
			if !ok {
				return
			}
			got := make([]int64, len(m))
			unpackOffsets(m, base, valid, got)
			if fmt.Sprint(got) != fmt.Sprint(tc.x) {
				t.Fatalf("read back %v; want %v", got, tc.x)
			}
		})
	}
}

// numbers makes an array of type t (int64, timestamp or float64) holding
// the 64-bit patterns bits, null where nulls says, with those bits in the
// null cells too.
func numbers(t arrow.DataType, bits []uint64, nulls []bool) arrow.Array {
	vals := make([]byte, 8*len(bits))
	for i, b := range bits {
		binary.LittleEndian.PutUint64(vals[8*i:], b)
	}
	var valid *memory.Buffer
	count := 0
	for i, null := range nulls {
		if valid == nil {
			valid = memory.NewBufferBytes(make([]byte, bitutil.BytesForBits(int64(len(bits)))))
			bitutil.SetBitsTo(valid.Bytes(), 0, int64(len(bits)), true)
		}
		if null {
			bitutil.ClearBit(valid.Bytes(), i)
			count++
		}
	}
	data := array.NewData(t, len(bits), []*memory.Buffer{valid, memory.NewBufferBytes(vals)}, nil, count, 0)
	defer data.Release()
	return array.MakeFromData(data)
}

// cellBits returns the 64-bit patterns of the cells of a, an int64,
// timestamp or float64 array, null cells included.
func cellBits(a arrow.Array) []uint64 {
	data := a.Data()
	vals := data.Buffers()[1].Bytes()[8*data.Offset():]
	out := make([]uint64, a.Len())
	for i := range out {
		out[i] = binary.LittleEndian.Uint64(vals[8*i:])
	}
	return out
}

// TestPackColumn packs and unpacks whole columns, with nulls, and checks
// the packing chosen and that the column comes back with the same type,
// validity and bits in every cell.
func TestPackColumn(t *testing.T) {
	f := math.Float64bits
	ts := &arrow.TimestampType{Unit: arrow.Millisecond}
	tests := []struct {
		name  string
		t     arrow.DataType
		bits  []uint64
		nulls []bool
		want  packing
	}{
		{"empty floats", arrow.PrimitiveTypes.Float64, nil, nil, packedDecimals},
		{"floats", arrow.PrimitiveTypes.Float64, []uint64{f(1.5), f(-2.25), f(1e-3)}, nil, packedDecimals},
		{"floats with nulls", arrow.PrimitiveTypes.Float64, []uint64{f(1.5), 0, f(-2.25)}, []bool{false, true, false}, packedDecimals},
		{"all null floats", arrow.PrimitiveTypes.Float64, []uint64{0, 0}, []bool{true, true}, packedDecimals},
		{"a null float not zero", arrow.PrimitiveTypes.Float64, []uint64{f(1), f(math.Pi)}, []bool{false, true}, packedPlain},
		{"NaN", arrow.PrimitiveTypes.Float64, []uint64{f(1), f(math.NaN())}, nil, packedPlain},
		{"negative zero", arrow.PrimitiveTypes.Float64, []uint64{f(math.Copysign(0, -1))}, nil, packedPlain},
		{"ids", arrow.PrimitiveTypes.Int64, []uint64{1 << 45, 1<<45 + 3, 1<<45 - 2}, nil, packedOffsets},
		{"ids with nulls", arrow.PrimitiveTypes.Int64, []uint64{1 << 45, 0, 1<<45 - 2}, []bool{false, true, false}, packedOffsets},
		{"all null ids", arrow.PrimitiveTypes.Int64, []uint64{0, 0, 0}, []bool{true, true, true}, packedOffsets},
		{"empty ids", arrow.PrimitiveTypes.Int64, nil, nil, packedOffsets},
		{"wide ids", arrow.PrimitiveTypes.Int64, []uint64{0, 1 << 33}, nil, packedPlain},
		{"negative ids", arrow.PrimitiveTypes.Int64, []uint64{uint64(1<<64 - 5), 3}, nil, packedOffsets},
		{"timestamps", ts, []uint64{1_700_000_000_000, 1_700_000_086_400}, []bool{false, false}, packedOffsets},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
			defer mem.AssertSize(t, 0)
			a := numbers(tc.t, tc.bits, tc.nulls)
			defer a.Release()
			var pk packer
			packed, p, param := pk.pack(0, a)
			defer packed.Release()
			if p != tc.want {
				t.Fatalf("packing %d; want %d", p, tc.want)
			}
			got := packed
			if p != packedPlain {
				if packed.Len() != a.Len() || packed.NullN() != a.NullN() || !arrow.TypeEqual(packed.DataType(), packedType(tc.t, p)) {
					t.Fatalf("packed as %d cells of %s, %d null", packed.Len(), packed.DataType(), packed.NullN())
				}
				got = unpackColumn(mem, tc.t, packed, p, param)
				defer got.Release()
			}
			if !arrow.TypeEqual(got.DataType(), tc.t) || got.NullN() != a.NullN() {
				t.Fatalf("read back as %s with %d nulls; want %s with %d", got.DataType(), got.NullN(), tc.t, a.NullN())
			}
			for i := range a.Len() {
				if got.IsNull(i) != a.IsNull(i) {
					t.Fatalf("cell %d null: %v; want %v", i, got.IsNull(i), a.IsNull(i))
				}
			}
			if g, w := cellBits(got), cellBits(a); fmt.Sprint(g) != fmt.Sprint(w) {
				t.Fatalf("read back %x; want %x", g, w)
			}
		})
	}
}

// TestSpillPacks spills CSV columns whose batches pack in turn and do not
// (a float batch with a NaN, -0, a subnormal or too many decimals, an id
// batch too wide, null cells, an empty file's batches) and checks that a
// scan of the spill returns every cell's bits as the scan of the file
// does, and that the packed copy takes about half the room.
func TestSpillPacks(t *testing.T) {
	var text strings.Builder
	text.WriteString("id,x,y,z\n")
	specials := []string{"NaN", "-0", "4.9e-324", "0.1234567891", "inf", "1e300"}
	rng := rand.New(rand.NewPCG(3, 5))
	const rows, per = 4000, 250
	for i := range rows {
		id := int64(1)<<40 + int64(i)
		if i/per == 3 && i%per == 7 {
			id = -id // batch 3: ids too wide
		}
		x := parseDecimal(t, rng.Int64N(2_000_000)-1_000_000, rng.IntN(4))
		xs := strconv.FormatFloat(x, 'g', -1, 64)
		if b := i / per; b%2 == 1 && i%per == 100 { // odd batches: one value that does not pack
			xs = specials[(b/2)%len(specials)]
		}
		y := ""
		if i%5 != 0 {
			y = strconv.Itoa(rng.IntN(100))
		}
		fmt.Fprintf(&text, "%d,%s,%s,%.2f\n", id, xs, y, float64(i)/4)
	}
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", text.String()}})
	opts := Options{Allocator: checkedMem(t), TempDir: t.TempDir(), BatchRows: per,
		Types: map[string]arrow.DataType{"id": tInt64, "x": tFloat64, "y": tInt64, "z": tFloat64}}
	s, err := Open(paths, opts)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	ctx := context.Background()
	sp, err := s.NewSpill(nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer sp.Close()
	if err := s.Scan(ctx, nil, func(b *Batch) error { sp.Write(b); return nil }); err != nil {
		t.Fatal(err)
	}
	if err := sp.Finish(); err != nil {
		t.Fatal(err)
	}
	want := collect(t, func(fn func(*Batch) error) error { return s.Scan(ctx, nil, fn) })
	got := collect(t, func(fn func(*Batch) error) error { return sp.ScanSome(ctx, nil, nil, fn) })
	defer func() {
		for _, b := range append(got, want...) {
			b.Release()
		}
	}()
	if len(got) != len(want) || len(want) != rows/per {
		t.Fatalf("%d batches; want %d of %d", len(got), len(want), rows/per)
	}
	for i := range want {
		if d := sameBatch(got[i], want[i]); d != "" {
			t.Fatalf("batch %d: %s", i, d)
		}
		for k := range want[i].Record.NumCols() {
			g, w := got[i].Record.Column(int(k)), want[i].Record.Column(int(k))
			if fmt.Sprint(cellBits(g)) != fmt.Sprint(cellBits(w)) {
				t.Fatalf("batch %d, column %d: bits %x; want %x", i, k, cellBits(g), cellBits(w))
			}
		}
	}
	if plain := int64(rows * 4 * 8); sp.size > plain*7/10 {
		t.Errorf("the copy takes %d bytes, against %d for the bare values", sp.size, plain)
	}
}

// FuzzPackColumns packs columns made of the input's bytes, as float64 and
// int64 values and as float64 values made of int32 mantissas and decimals,
// and checks that whatever packs comes back bit for bit, and that the
// values made of mantissas always pack.
func FuzzPackColumns(f *testing.F) {
	f.Add([]byte{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15}, uint8(3))
	f.Add([]byte{0xff, 0xff, 0xff, 0x7f, 0, 0, 0, 0x80, 0, 0, 0, 0, 0, 0, 0xf8, 0x7f}, uint8(9))
	f.Add([]byte{0, 0, 0, 0, 0, 0, 0, 0x80}, uint8(0))
	f.Fuzz(func(t *testing.T, data []byte, dec uint8) {
		n := len(data) / 8
		x := make([]float64, n)
		ints := make([]int64, n)
		for i := range n {
			u := binary.LittleEndian.Uint64(data[8*i:])
			x[i], ints[i] = math.Float64frombits(u), int64(u)
		}
		m := make([]int32, n)
		if d, ok := packDecimals(x, m); ok {
			sameFloats(t, unpackedDecimals(m, d), x)
		}
		u := make([]uint32, n)
		if base, ok := packOffsets(ints, nil, u); ok {
			got := make([]int64, n)
			unpackOffsets(u, base, nil, got)
			if fmt.Sprint(got) != fmt.Sprint(ints) {
				t.Fatalf("%v read back as %v", ints, got)
			}
		}
		k := int(dec % (maxDecimals + 1))
		y := make([]float64, len(data)/4)
		for i := range y {
			y[i] = float64(int32(binary.LittleEndian.Uint32(data[4*i:]))) / pow10[k]
		}
		my := make([]int32, len(y))
		d, ok := packDecimals(y, my)
		if !ok || d > k {
			t.Fatalf("%v of %d decimals packed: %v, with %d", y, k, ok, d)
		}
		sameFloats(t, unpackedDecimals(my, d), y)
	})
}

// benchDecimals returns a batch of float64 values of 1 to 3 decimals, as
// the measurement columns of the reference data hold.
func benchDecimals(b *testing.B) []float64 {
	rng := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, 1<<16)
	for i := range x {
		k := 1 + rng.IntN(3)
		x[i] = float64(rng.Int64N(2_000_000)-1_000_000) / pow10[k]
	}
	return x
}

// BenchmarkPackDecimals measures packing one batch of a float64 column
// (the spill's writing goroutine does it for every such column).
func BenchmarkPackDecimals(b *testing.B) {
	x := benchDecimals(b)
	m := make([]int32, len(x))
	b.SetBytes(int64(8 * len(x)))
	b.ReportAllocs()
	for b.Loop() {
		if _, ok := packDecimals(x, m); !ok {
			b.Fatal("not packed")
		}
	}
	b.ReportMetric(float64(len(x))*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}

// BenchmarkUnpackDecimals measures unpacking one batch of a float64
// column (a scan of the spill does it for every such column).
func BenchmarkUnpackDecimals(b *testing.B) {
	x := benchDecimals(b)
	m := make([]int32, len(x))
	d, ok := packDecimals(x, m)
	if !ok {
		b.Fatal("not packed")
	}
	b.SetBytes(int64(8 * len(x)))
	b.ReportAllocs()
	for b.Loop() {
		unpackDecimals(m, d, x)
	}
	b.ReportMetric(float64(len(x))*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}
