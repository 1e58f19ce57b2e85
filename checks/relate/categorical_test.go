package relate

import (
	"fmt"
	"math"
	"reflect"
	"testing"
)

// TestTableMerge: tables of shards merge into the table of the whole, and
// the test does not depend on how the rows were split.
func TestTableMerge(t *testing.T) {
	rng := newRand(19)
	var whole Table
	parts := make([]Table, 4)
	for i := 0; i < 3000; i++ {
		a := fmt.Sprint("a", rng.IntN(4))
		b := fmt.Sprint("b", rng.IntN(3))
		if rng.Float64() < 0.3 {
			b = "b" + a[1:] // some association
		}
		whole.Add(a, b)
		parts[rng.IntN(len(parts))].Add(a, b)
	}
	var merged Table
	for _, p := range parts {
		merged.Merge(p)
	}
	if !reflect.DeepEqual(merged.Counts, whole.Counts) {
		t.Fatalf("merged counts %v, whole %v", merged.Counts, whole.Counts)
	}
	w, err := whole.Independence()
	if err != nil {
		t.Fatal(err)
	}
	m, _ := merged.Independence()
	if w != m {
		t.Errorf("merged %+v, whole %+v", m, w)
	}
	if w.Rows != 4 || w.Cols != 4 || w.DF != 9 || w.N != 3000 || w.PValue > 1e-6 || w.V <= w.VCorrected || w.VCorrected <= 0 {
		t.Errorf("associated 4x4 table: %+v", w)
	}
}

// TestIndependenceInvariants: V is 1 when one column determines the other,
// near 0 for independent columns (the corrected V nearer), symmetric in
// the columns, and the p-value is in [0, 1] with about 5% below 0.05 under
// independence.
func TestIndependenceInvariants(t *testing.T) {
	var diag Table
	for i, v := range []string{"x", "y", "z"} {
		diag.AddCount(v, fmt.Sprint(i), int64(10+i))
	}
	d, err := diag.Independence()
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(d.V-1) > 1e-12 || d.DF != 4 {
		t.Errorf("diagonal table: V = %v, df %d; want 1, 4", d.V, d.DF)
	}

	rng := newRand(23)
	rejected := 0
	const reps = 400
	for rep := 0; rep < reps; rep++ {
		var tb, swapped Table
		for i := 0; i < 200; i++ {
			a, b := fmt.Sprint(rng.IntN(3)), fmt.Sprint(rng.IntN(4))
			tb.Add(a, b)
			swapped.Add(b, a)
		}
		as, err := tb.Independence()
		if err != nil {
			t.Fatal(err)
		}
		sw, _ := swapped.Independence()
		if math.Abs(as.ChiSquare-sw.ChiSquare) > 1e-9*as.ChiSquare || math.Abs(as.V-sw.V) > 1e-12 || math.Abs(as.PValue-sw.PValue) > 1e-12 {
			t.Errorf("swapping the columns changed %+v to %+v", as, sw)
		}
		if as.PValue < 0 || as.PValue > 1 || as.V < 0 || as.V > 1 || as.VCorrected > as.V {
			t.Errorf("rep %d: %+v", rep, as)
		}
		if as.PValue < 0.05 {
			rejected++
		}
	}
	// Binomial(400, 0.05) has sd 4.4: 20 ± 11.
	if rejected < 9 || rejected > 31 {
		t.Errorf("independent columns rejected %d times in %d at 5%%, want about 20", rejected, reps)
	}
}

func TestIndependenceErrors(t *testing.T) {
	var one, empty, zero Table
	one.Add("a", "x")
	one.Add("b", "x")
	zero.AddCount("a", "x", 5)
	zero.AddCount("b", "y", 5)
	zero.AddCount("c", "z", 0) // a value seen with no rows is not a level
	for _, c := range []struct {
		name string
		tb   Table
		want string
	}{
		{"one column value", one, "at least two values in each column, got 2 and 1"},
		{"empty", empty, "got 0 and 0"},
	} {
		_, err := c.tb.Independence()
		wantErr(t, c.name, err, c.want)
	}
	z, err := zero.Independence()
	if err != nil || z.Rows != 2 || z.Cols != 2 || z.V != 1 {
		t.Errorf("zero-count cell: %+v, %v; want a 2x2 table with V = 1", z, err)
	}
	var neg Table
	neg.AddCount("a", "x", -1)
	_, err = neg.Independence()
	wantErr(t, "negative", err, `negative count -1 for ("a", "x")`)
}

func TestDependency(t *testing.T) {
	rows := [][2]string{
		{"p1", "red"}, {"p1", "red"}, {"p2", "blue"}, {"p3", "green"},
		{"p3", "green"}, {"p3", "teal"}, {"p4", "red"}, {"p4", "blue"},
		{"p4", "blue"}, {"p4", "red"}, {"p4", "grey"}, {"p5", "x"},
	}
	want := DependencyResult{
		Rows: 12, Groups: 5, ViolatingRows: 8, Share: 8.0 / 12,
		Violations: []Violation{
			{A: "p4", Rows: 5, Values: []ValueCount{{"blue", 2}, {"red", 2}, {"grey", 1}}},
			{A: "p3", Rows: 3, Values: []ValueCount{{"green", 2}, {"teal", 1}}},
		},
	}
	var whole Dependency
	for _, r := range rows {
		whole.Add(r[0], r[1])
	}
	if got := whole.Result(); !reflect.DeepEqual(got, want) {
		t.Errorf("got %+v\nwant %+v", got, want)
	}
	// Shards in any split merge to the same result.
	for split := 1; split < len(rows); split++ {
		var a, b Dependency
		for i, r := range rows {
			if i < split {
				a.Add(r[0], r[1])
			} else {
				b.Add(r[0], r[1])
			}
		}
		b.Merge(a)
		if got := b.Result(); !reflect.DeepEqual(got, want) {
			t.Errorf("split at %d: got %+v", split, got)
		}
	}
	// Second pass: the rows of violating groups.
	var flagged []int
	for i, r := range rows {
		if whole.Violates(r[0]) {
			flagged = append(flagged, i+1)
		}
	}
	if w := []int{4, 5, 6, 7, 8, 9, 10, 11}; !reflect.DeepEqual(flagged, w) {
		t.Errorf("flagged rows %v, want %v", flagged, w)
	}
	if whole.Violates("unseen") {
		t.Error("an unseen value violates")
	}
	var empty Dependency
	if r := empty.Result(); r.Share != 0 || r.Rows != 0 || len(r.Violations) != 0 {
		t.Errorf("empty: %+v", r)
	}
	empty.AddCount("a", "b", 0)
	if r := empty.Result(); r.Rows != 0 || r.Groups != 0 {
		t.Errorf("a zero count added rows: %+v", r)
	}
}
