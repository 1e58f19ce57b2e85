package relate

import (
	"cmp"
	"slices"
)

// Dependency summarises whether column A determines column B (the
// functional dependency A -> B of relational database theory, Codd 1970):
// for each value of A, the values of B seen with it and their row counts.
// A value of A seen with more than one value of B is a violating group.
// Summaries of disjoint rows merge. Memory grows with the distinct values
// of A, plus the extra B values of violating groups. The zero value is an
// empty summary.
type Dependency struct {
	groups map[string]*depGroup
	rows   int64
}

// depGroup holds the B values of one A value: the first seen inline, the
// others in a map made only when a second value appears.
type depGroup struct {
	first  string
	n      int64
	others map[string]int64
}

// Add counts one row with values a and b.
func (d *Dependency) Add(a, b string) { d.AddCount(a, b, 1) }

// AddCount counts n rows with values a and b.
func (d *Dependency) AddCount(a, b string, n int64) {
	if n <= 0 {
		return
	}
	if d.groups == nil {
		d.groups = map[string]*depGroup{}
	}
	d.rows += n
	g := d.groups[a]
	switch {
	case g == nil:
		d.groups[a] = &depGroup{first: b, n: n}
	case g.first == b:
		g.n += n
	default:
		if g.others == nil {
			g.others = map[string]int64{}
		}
		g.others[b] += n
	}
}

// Merge adds the rows summarised by o to d.
func (d *Dependency) Merge(o Dependency) {
	for a, g := range o.groups {
		d.AddCount(a, g.first, g.n)
		for b, n := range g.others {
			d.AddCount(a, b, n)
		}
	}
}

// Violates reports whether rows with A value a belong to a violating
// group; on a second pass it finds the rows to list.
func (d *Dependency) Violates(a string) bool {
	g := d.groups[a]
	return g != nil && len(g.others) > 0
}

// ValueCount is a value of B and the rows that hold it within one group.
type ValueCount struct {
	B    string
	Rows int64
}

// Violation is a value of A seen with several values of B.
type Violation struct {
	A    string
	Rows int64
	// Values are the B values of the group, most rows first (then by
	// value); the first is the group's most common B.
	Values []ValueCount
}

// DependencyResult measures how far A is from determining B.
type DependencyResult struct {
	Rows int64
	// Groups is the number of distinct values of A.
	Groups int
	// ViolatingRows counts the rows of violating groups, all of them
	// (the group's most common B included: which value is right is not
	// known).
	ViolatingRows int64
	// Share = ViolatingRows / Rows, the measure to bound; 0 without rows.
	Share float64
	// Violations lists the violating groups, most rows first, then by A.
	Violations []Violation
}

// Result returns the violating groups and the share of rows in them.
func (d *Dependency) Result() DependencyResult {
	res := DependencyResult{Rows: d.rows, Groups: len(d.groups)}
	for a, g := range d.groups {
		if len(g.others) == 0 {
			continue
		}
		v := Violation{A: a, Rows: g.n, Values: []ValueCount{{g.first, g.n}}}
		for b, n := range g.others {
			v.Values = append(v.Values, ValueCount{b, n})
			v.Rows += n
		}
		slices.SortFunc(v.Values, func(x, y ValueCount) int {
			if c := cmp.Compare(y.Rows, x.Rows); c != 0 {
				return c
			}
			return cmp.Compare(x.B, y.B)
		})
		res.ViolatingRows += v.Rows
		res.Violations = append(res.Violations, v)
	}
	slices.SortFunc(res.Violations, func(x, y Violation) int {
		if c := cmp.Compare(y.Rows, x.Rows); c != 0 {
			return c
		}
		return cmp.Compare(x.A, y.A)
	})
	if d.rows > 0 {
		res.Share = float64(res.ViolatingRows) / float64(d.rows)
	}
	return res
}
