package bottomk

import (
	"cmp"
	"fmt"
	"slices"
	"testing"
)

// bruteForce is the sample by definition: the size rows of smallest key
// among rows, in row order.
func bruteForce(s *Sample, rows []int64) []int64 {
	all := slices.Clone(rows)
	slices.SortFunc(all, func(a, b int64) int { return cmp.Compare(Key(s.seed, a), Key(s.seed, b)) })
	all = all[:min(len(all), s.size)]
	slices.Sort(all)
	return all
}

// valueOf is the value a test gives row r, column j.
func valueOf(r int64, j int) float64 { return float64(r)*10 + float64(j) }

// checkSample fails unless s holds exactly the rows want, in that order,
// with their values.
func checkSample(t *testing.T, s *Sample, want []int64) {
	t.Helper()
	if got := s.Rows(); !slices.Equal(got, want) {
		t.Fatalf("rows\n%v\nwant\n%v", got, want)
	}
	for j := range s.P() {
		for i, v := range s.Values(j) {
			if v != valueOf(want[i], j) {
				t.Fatalf("value %d of row %d is %v, want %v", j, want[i], v, valueOf(want[i], j))
			}
		}
	}
	for i, r := range want {
		if v := s.Row(i); v[0] != valueOf(r, 0) {
			t.Fatalf("Row(%d) = %v, want row %d", i, v, r)
		}
		if k := s.Keys()[i]; k != Key(s.seed, r) {
			t.Fatalf("Keys()[%d] = %#x, want the key of row %d", i, k, r)
		}
	}
}

// TestExactWhateverTheSplit: lanes fed interleaved batches of a stream
// (batch k to lane k mod lanes, as the engine deals them), with rows left
// out here and there, merged in lane order and then offered a few more
// rows, hold exactly the rows of smallest key of the whole stream, in row
// order, whatever the batch size and the number of lanes; a stream of at
// most Size rows is kept whole.
func TestExactWhateverTheSplit(t *testing.T) {
	tests := []struct {
		name          string
		size, p, n    int
		batch, lanes  int
		skip          int // every skip-th row is not offered (0: none)
		offerOneByOne bool
	}{
		{"complete, two lanes", 100, 1, 90, 10, 2, 0, false},
		{"complete, exactly full", 60, 2, 60, 7, 3, 0, false},
		{"complete, a lane sees nothing", 100, 1, 10, 10, 4, 0, false},
		{"sampled, one lane", 50, 1, 5000, 64, 1, 0, false},
		{"sampled, batches of 7, three lanes", 50, 3, 5000, 7, 3, 5, true},
		{"sampled, batches of 1000, four lanes", 300, 1, 20000, 1000, 4, 3, false},
		{"sampled, size one", 1, 1, 3000, 13, 4, 0, false},
		{"large, one value", 100_000, 1, 1_000_000, 1 << 16, 4, 0, false},
		{"large, three values", 20_000, 3, 300_000, 5000, 3, 11, false},
		{"nine lanes", 50, 2, 50_000, 100, 9, 0, false},
		{"two whole lanes sampled together", 100, 1, 150, 10, 2, 0, true},
		{"twenty lanes, merged in several goes", 10, 1, 20_000, 50, 20, 0, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			mk := func() *Sample {
				s, err := New(tc.size, tc.p, 42)
				if err != nil {
					t.Fatal(err)
				}
				return s
			}
			whole := mk()
			lanes := make([]*Sample, tc.lanes)
			for i := range lanes {
				lanes[i] = mk()
			}
			var offered []int64
			for first, k := 1, 0; first <= tc.n; first, k = first+tc.batch, k+1 {
				var at []int
				var vals []float64
				for i := range min(tc.batch, tc.n-first+1) {
					row := int64(first + i)
					if tc.skip > 0 && row%int64(tc.skip) == 0 {
						continue
					}
					at = append(at, i)
					offered = append(offered, row)
					for j := range tc.p {
						vals = append(vals, valueOf(row, j))
					}
				}
				lane := lanes[k%tc.lanes]
				switch {
				case tc.offerOneByOne:
					for i, a := range at {
						lane.Offer(int64(first+a), vals[i*tc.p:(i+1)*tc.p])
					}
				case tc.skip == 0:
					lane.OfferRun(int64(first), vals)
				default:
					lane.OfferAt(int64(first), at, vals)
				}
				whole.OfferAt(int64(first), at, vals)
			}
			for _, l := range lanes[1:] {
				if err := lanes[0].Merge(l); err != nil {
					t.Fatal(err)
				}
			}
			// Rows offered after the merge join the merged rows.
			extra := make([]float64, 3*tc.p)
			for i := range 3 {
				row := int64(tc.n + 1 + i)
				offered = append(offered, row)
				for j := range tc.p {
					extra[i*tc.p+j] = valueOf(row, j)
				}
			}
			if tc.offerOneByOne {
				for i := range 3 {
					lanes[0].Offer(int64(tc.n+1+i), extra[i*tc.p:(i+1)*tc.p])
				}
			} else {
				lanes[0].OfferRun(int64(tc.n+1), extra)
			}
			whole.OfferRun(int64(tc.n+1), extra)
			whole.OfferRun(int64(tc.n+4), nil)
			want := bruteForce(whole, offered)
			for name, s := range map[string]*Sample{"one sample": whole, "merged lanes": lanes[0]} {
				t.Run(name, func(t *testing.T) {
					if s.Seen() != int64(len(offered)) || s.Complete() != (len(offered) <= tc.size) || s.Len() != len(want) {
						t.Fatalf("seen %d complete %v len %d; want %d %v %d", s.Seen(), s.Complete(), s.Len(), len(offered), len(offered) <= tc.size, len(want))
					}
					checkSample(t, s, want)
				})
			}
			if len(offered) <= tc.size && !slices.Equal(want, offered) {
				t.Errorf("a complete sample is not every row in row order")
			}
		})
	}
}

// TestOutOfOrder: rows offered in any order, and samples merged in any
// order, give the same sample in row order; the sample merged from is
// left empty.
func TestOutOfOrder(t *testing.T) {
	for _, size := range []int{30, 5000} {
		t.Run(fmt.Sprint(size), func(t *testing.T) {
			rows := make([]int64, 3000)
			for i := range rows {
				rows[i] = int64((i*1237)%3000) + 1 // a permutation of 1..3000
			}
			a, _ := New(size, 1, 7)
			b, _ := New(size, 1, 7)
			c, _ := New(size, 1, 7)
			for i, r := range rows {
				v := []float64{valueOf(r, 0)}
				a.OfferRun(r, v)
				if i%2 == 0 {
					b.Offer(r, v)
				} else {
					c.Offer(r, v)
				}
			}
			if err := c.Merge(b); err != nil {
				t.Fatal(err)
			}
			if b.Seen() != 0 || b.Len() != 0 {
				t.Errorf("the sample merged from still holds %d of %d rows", b.Len(), b.Seen())
			}
			want := bruteForce(a, rows)
			checkSample(t, a, want)
			checkSample(t, c, want)
		})
	}
}

// TestMergeMismatch: samples of other sizes, widths or seeds do not merge.
func TestMergeMismatch(t *testing.T) {
	a, _ := New(10, 2, 1)
	for _, o := range []struct{ size, p int }{{11, 2}, {10, 1}} {
		b, _ := New(o.size, o.p, 1)
		if err := a.Merge(b); err == nil {
			t.Errorf("merged a sample of %d rows of %d values into one of 10 of 2", o.size, o.p)
		}
	}
	b, _ := New(10, 2, 2)
	if err := a.Merge(b); err == nil {
		t.Error("merged samples of different seeds")
	}
	for _, bad := range []struct{ size, p int }{{0, 1}, {5, 0}} {
		if _, err := New(bad.size, bad.p, 1); err == nil {
			t.Errorf("New(%d, %d) accepted", bad.size, bad.p)
		}
	}
}

// TestKeyOneToOne: a row is read back from its key, for rows and seeds
// near the ends of their ranges, so no two rows share a key.
func TestKeyOneToOne(t *testing.T) {
	for _, seed := range []uint64{0, 1, 42, 1<<64 - 1} {
		s, _ := New(1, 1, seed)
		for _, row := range []int64{0, 1, 2, 65535, 1 << 40, -1, 1<<63 - 1, -1 << 63} {
			k := s.key(row)
			if k != Key(seed, row) || s.rowOf(k) != row || unmix(mix(uint64(row))) != uint64(row) {
				t.Errorf("seed %d row %d: key %#x reads back as row %d", seed, row, k, s.rowOf(k))
			}
		}
	}
	for _, c := range [][2]uint64{{gamma, gammaInv}, {mul1, mul1Inv}, {mul2, mul2Inv}} {
		if c[0]*c[1] != 1 {
			t.Errorf("%#x * %#x = %#x mod 2^64, not 1", c[0], c[1], c[0]*c[1])
		}
	}
}

// TestBunchedKeys: rows whose keys all fall in one bucket of the
// histogram (made by reading rows back from chosen keys) are still kept
// exactly, by the exact selection the bucket cannot replace.
func TestBunchedKeys(t *testing.T) {
	s, _ := New(5, 1, 3)
	var rows []int64
	for i := range uint64(3000) {
		row := s.rowOf(1<<40 + i*7)
		rows = append(rows, row)
		s.Offer(row, []float64{valueOf(row, 0)})
	}
	// Spread keys first, so that the histogram exists, then the bunch.
	spread, _ := New(5, 1, 3)
	spread.OfferRun(1, make([]float64, 2000))
	for _, r := range rows {
		spread.Offer(r, []float64{0})
	}
	checkSample(t, s, bruteForce(s, rows))
	if got, want := spread.Rows(), bruteForce(spread, append(rows, seqRows(1, 2000)...)); !slices.Equal(got, want) {
		t.Errorf("rows %v, want %v", got, want)
	}
}

// seqRows is the rows from..to.
func seqRows(from, to int64) []int64 {
	var rows []int64
	for r := from; r <= to; r++ {
		rows = append(rows, r)
	}
	return rows
}
