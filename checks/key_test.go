package checks

import (
	"reflect"
	"testing"

	"github.com/assay-project/assay/rules"
)

func TestKey(t *testing.T) {
	mem := checkedMem(t)
	// Rows 1-2 share (x, 1); rows 3-4 share (x, missing); rows 6 and 7 did
	// not parse in column n, with different texts, so they differ; row 8
	// is (y, 1) like row 5. 6 of 8 rows are in a duplicated key.
	b := newBatch(t, mem, 1,
		col{"s", tString, []any{"x", "x", "x", "x", "y", "y", "y", "y"}},
		col{"n", tInt, []any{1, 1, nil, nil, 1, bad("q"), bad("r"), 1}},
		col{"t", tTime, []any{5, 5, 6, 6, 7, 8, 9, 7}},
	)
	b1, b2 := split(t, b, 3)
	release(t, b, b1, b2)
	tests := []struct {
		name string
		hash func([]byte) uint64
	}{
		{"seeded hash", nil},
		{"every row collides", func([]byte) uint64 { return 0 }},
		{"collisions on the first byte", func(b []byte) uint64 { return uint64(b[0]) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, newRule(rules.KeySpec{}, atMost(0), "s", "n"), envOf(b, 10))
			if tc.hash != nil {
				hashes(t, c, tc.hash)
			}
			res := run(t, c, b)
			count, rows, _ := listed(res)
			if res.Measure.Value != 6.0/8 || count != 6 || !reflect.DeepEqual(rows, []int64{1, 2, 3, 4, 5, 8}) {
				t.Errorf("measure %v offending %d %v, want 0.75 6 [1 2 3 4 5 8]", res.Measure.Value, count, rows)
			}
			if want := "6 of 8 rows (75%) share their key with another row (3 duplicated keys)"; res.Message != want {
				t.Errorf("message %q, want %q", res.Message, want)
			}
			wantValues := map[string]any{"s": "x", "n": nil}
			if got := res.Offending.Rows[2].Values; !reflect.DeepEqual(got, wantValues) {
				t.Errorf("row 3 values %v, want %v", got, wantValues)
			}
			sameResult(t, "merged", runMerged(t, c, b1, b2), res, 0)
		})
	}
	// The invalid text and times come back as a report shows them.
	c := compile(t, newRule(rules.KeySpec{}, atMost(0), "n", "t"), envOf(b, 10))
	hashes(t, c, func([]byte) uint64 { return 1 })
	res := run(t, c, b)
	if count, rows, _ := listed(res); count != 6 || !reflect.DeepEqual(rows, []int64{1, 2, 3, 4, 5, 8}) {
		t.Errorf("key n, t: offending %d %v, want 6 [1 2 3 4 5 8]", count, rows)
	}
	want := map[string]any{"n": int64(1), "t": "1970-01-01T00:00:00.000007Z"}
	if got := res.Offending.Rows[4].Values; !reflect.DeepEqual(got, want) {
		t.Errorf("row 5 values %v, want %v", got, want)
	}
}

// TestKeyDecode: the bytes of a key combination read back as the values
// Value gives for the same cells.
func TestKeyDecode(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1,
		col{"s", tString, []any{"héllo", nil}},
		col{"x", tFloat, []any{-2.5, bad("abc")}},
		col{"b", tBool, []any{true, false}},
		col{"d", tDate, []any{19723, nil}},
	)
	release(t, b)
	c := compile(t, newRule(rules.KeySpec{}, atMost(0), "s", "x", "b", "d"), envOf(b, 10))
	d := c.(*dupCheck)
	r, err := d.rows(b, &hashScratch{})
	if err != nil {
		t.Fatal(err)
	}
	for i := range 2 {
		got := d.decode(string(r.key(nil, i)))
		want := RowAt(d.env, b, i, []int{0, 1, 2, 3}).Values
		if !reflect.DeepEqual(got, want) {
			t.Errorf("row %d decodes to %v, want %v", i, got, want)
		}
	}
}
