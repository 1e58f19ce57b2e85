package profile

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
)

// write renders the draft as YAML: columns in data order, pairs in the
// order of their columns, every number in a fixed format.
func (d *drafter) write() []byte {
	var w strings.Builder
	st := d.st
	name := d.opts.Name
	if name == "" {
		name = "drafted"
	}
	fmt.Fprintf(&w, "# Drafted by `assay profile` from %d rows of %s.\n", st.rows, describeFiles(st))
	w.WriteString("# Every rule says what was seen; the margins are a starting point, not a verdict on the\n")
	w.WriteString("# data. Review and edit before relying on it (README, \"assay profile\").\n")
	fmt.Fprintf(&w, "policy: %s\n", str(name))
	if len(d.opts.Data) > 0 {
		fmt.Fprintf(&w, "data: %s\n", flow(d.opts.Data, str))
	}
	w.WriteString("columns:\n")
	for _, cd := range d.cols {
		d.writeColumn(&w, cd)
	}
	if len(d.pairs) > 0 {
		w.WriteString("pairs:\n")
		for _, p := range d.pairs {
			writePair(&w, p)
		}
	}
	w.WriteString("table:\n")
	fmt.Fprintf(&w, "  # seen: %d rows, %d columns\n", st.rows, len(st.cols))
	var names []string
	for _, c := range st.cols {
		if listable(c.name) {
			names = append(names, c.name)
		}
	}
	if len(d.key) > 0 {
		comment(&w, "  ", "no column is a key alone; this pair of columns has no repeated combination")
		fmt.Fprintf(&w, "  key: %s\n", flow(d.key, str))
	}
	if len(names) > 0 {
		fmt.Fprintf(&w, "  required: %s\n", flow(names, str))
	}
	w.WriteString("  closed: true\n")
	return []byte(w.String())
}

func (d *drafter) writeColumn(w *strings.Builder, cd colDraft) {
	c := cd.c
	if k := str(c.name); len(k) > 1000 {
		// YAML allows implicit keys up to 1024 characters; a longer
		// one is written as an explicit key.
		fmt.Fprintf(w, "  ? %s\n  :\n", k)
	} else {
		fmt.Fprintf(w, "  %s:\n", k)
	}
	comment(w, "    ", "seen: "+strings.Join(cd.seen, "; "))
	if c.typ != "" {
		fmt.Fprintf(w, "    type: %s\n", c.typ)
	}
	fmt.Fprintf(w, "    nulls: %s\n", cd.nulls)
	if cd.unique {
		w.WriteString("    unique: true\n")
	}
	if cd.lo != "" {
		fmt.Fprintf(w, "    minimum: %s\n", cd.lo)
		fmt.Fprintf(w, "    maximum: %s\n", cd.hi)
	}
	if len(cd.enum) > 0 {
		quote := str
		if c.typ == "integer" {
			quote = func(s string) string { return s }
		}
		fmt.Fprintf(w, "    enum: %s\n", flow(cd.enum, quote))
	}
	if f := cd.fam; f != nil {
		comment(w, "    ", "families by AIC, best first: "+strings.Join(f.ranked, ", "))
		comment(w, "    ", fmt.Sprintf("KS distance of the sampled values from the drafted %s: %.4f", f.family, f.distance))
		w.WriteString("    distribution:\n")
		fmt.Fprintf(w, "      family: %s\n", f.family)
		var ps []string
		for _, p := range f.params {
			ps = append(ps, p.name+": "+num(p.value))
		}
		fmt.Fprintf(w, "      parameters: {%s}\n", strings.Join(ps, ", "))
		fmt.Fprintf(w, "      tolerance: {warn: %.2f, fail: %.2f}\n", f.warn, f.fail)
	} else if cd.skipped != "" {
		comment(w, "    ", "no distribution drafted: "+cd.skipped)
	}
}

func writePair(w *strings.Builder, p pairDraft) {
	seen := fmt.Sprintf("seen: Pearson r %.3f over %d rows, Spearman rho %.3f over the sampled rows", p.r, p.n, p.rho)
	if p.relation == "linear" {
		seen += fmt.Sprintf("; the residual rule flags %s of the sampled rows", pct(p.residual))
	}
	comment(w, "  ", seen)
	fmt.Fprintf(w, "  - columns: %s\n", flow([]string{p.x, p.y}, str))
	fmt.Fprintf(w, "    relation: %s\n", p.relation)
	side := "minimum"
	if p.bound < 0 {
		side = "maximum"
	}
	fmt.Fprintf(w, "    correlation: {%s: %.2f}\n", side, p.bound)
	if p.relation == "linear" {
		fmt.Fprintf(w, "    residuals: {tolerance: {warn: %s, fail: %s}}\n", share(p.resWarn), share(p.resFail))
	}
}

// listable reports whether a column name can stand in a policy's lists of
// columns (required, key, pairs), which refuse blank names.
func listable(name string) bool { return strings.TrimSpace(name) != "" }

// comment writes text as comment lines of at most about 100 characters.
func comment(w *strings.Builder, indent, text string) {
	line := ""
	for _, word := range strings.Fields(text) {
		if line != "" && len(indent)+2+len(line)+1+len(word) > 100 {
			fmt.Fprintf(w, "%s# %s\n", indent, line)
			line = ""
		}
		if line != "" {
			line += " "
		}
		line += word
	}
	if line != "" {
		fmt.Fprintf(w, "%s# %s\n", indent, line)
	}
}

// plainText is text YAML reads as a string without quotes, in block and
// flow context alike.
var plainText = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_.-]*$`)

// str writes s as a YAML string: plain when that reads back as the same
// string, else double-quoted (Go's escapes are a subset of YAML's).
func str(s string) string {
	switch strings.ToLower(s) {
	case "true", "false", "null", "yes", "no", "on", "off", "y", "n", "nan", "inf":
		return strconv.Quote(s)
	}
	if plainText.MatchString(s) {
		return s
	}
	return strconv.Quote(s)
}

func flow(items []string, quote func(string) string) string {
	out := make([]string, len(items))
	for i, s := range items {
		out[i] = quote(s)
	}
	return "[" + strings.Join(out, ", ") + "]"
}

// num writes a number in its shortest exact decimal form, without an
// exponent between 1e-6 and 1e21.
func num(v float64) string {
	if a := math.Abs(v); a != 0 && (a < 1e-6 || a >= 1e21) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// share writes a drafted threshold as a percent with one decimal, or 0.
func share(v float64) string {
	if v == 0 {
		return "0"
	}
	return strconv.FormatFloat(v*100, 'f', 1, 64) + "%"
}

// pct writes an observed share as a percent with two decimals.
func pct(v float64) string { return strconv.FormatFloat(v*100, 'f', 2, 64) + "%" }
