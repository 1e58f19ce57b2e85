package report

import (
	"bytes"
	_ "embed"
	"fmt"
	"html/template"
	"io"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"
)

//go:embed html.tmpl
var htmlSource string

var htmlPage = template.Must(template.New("report").Parse(htmlSource))

// WriteHTML writes the report as one self-contained HTML page: a summary
// (verdict, counts, data read, policy, tool and time), an overview of the
// rules, and a section per rule with its measure, thresholds, message,
// what a statistical rule found, its offending rows and the charts that
// show why. The page loads nothing: styles are inline, charts are inline
// SVG drawn with gonum/plot, and it needs no JavaScript; a content
// security policy tells the browser to refuse any other resource.
//
// Every text from the report is escaped by html/template; bytes that are
// not UTF-8 and control characters, which HTML does not allow, are shown
// as U+FFFD. The same report always gives the same bytes.
func WriteHTML(w io.Writer, r *Report) error {
	page, err := newPage(r)
	if err != nil {
		return err
	}
	var b bytes.Buffer
	if err := htmlPage.Execute(&b, page); err != nil {
		return fmt.Errorf("html report: %w", err)
	}
	_, err = w.Write(htmlChars(b.Bytes()))
	return err
}

// htmlChars replaces what an HTML document may not hold (bytes that are
// not UTF-8, control characters other than tab, line feed and carriage
// return, and noncharacters; WHATWG HTML, section 13.2.3.5) by U+FFFD.
func htmlChars(p []byte) []byte {
	out := make([]byte, 0, len(p))
	for i := 0; i < len(p); {
		r, size := utf8.DecodeRune(p[i:])
		switch {
		case r == utf8.RuneError && size == 1,
			r < 0x20 && r != '\t' && r != '\n' && r != '\r',
			r >= 0x7f && r <= 0x9f,
			r >= 0xfdd0 && r <= 0xfdef, r&0xfffe == 0xfffe:
			out = utf8.AppendRune(out, utf8.RuneError)
		default:
			out = append(out, p[i:i+size]...)
		}
		i += size
	}
	return out
}

// page is what the template shows, every value already formatted.
type page struct {
	Title     string
	Verdict   badge
	Policy    Policy
	Counts    []countView
	Rows      string
	Sources   *table
	Tool      string
	Started   string
	StartedAt string // machine-readable, for <time datetime>
	Duration  string
	Schema    string
	// Rules holds every rule in policy order, for the overview; Open
	// those that did not pass or did not run, and Passed the others, for
	// the sections, which show the rules to look at first.
	Rules  []*ruleView
	Open   []*ruleView
	Passed []*ruleView
}

// badge is a verdict written as a word, with the class that colours it.
type badge struct {
	Class, Word string
}

type countView struct {
	Badge badge
	N     int
}

// ruleView is one rule's section.
type ruleView struct {
	Anchor    string
	ID        string
	Check     string
	Columns   string
	Badge     badge
	Measure   string
	Tolerance string
	Direction string
	Message   string
	Error     string
	Position  string
	Facts     []fact
	Charts    []*chart
	Tables    []*table
	Offending *table
}

// fact is one labelled value in a rule's details.
type fact struct {
	Name, Value string
}

// table is a table of formatted cells. Head names the columns; Num marks
// the columns of numbers, aligned right. The first cell of each row heads
// it.
type table struct {
	Caption string
	Class   string
	Head    []string
	Num     []bool
	Rows    [][]string
	Note    string
}

// newPage prepares the report for the template.
func newPage(r *Report) (*page, error) {
	p := &page{
		Verdict:  verdictBadge(r.Verdict),
		Policy:   r.Policy,
		Rows:     groupDigits(r.Rows),
		Tool:     strings.TrimSpace(r.Tool.Name + " " + r.Tool.Version),
		Duration: strconv.FormatFloat(r.Duration, 'f', 3, 64) + " s",
		Schema:   r.Schema,
	}
	p.Title = fmt.Sprintf("%s · %s · assay report", p.Verdict.Word, r.Policy.Name)
	if !r.Started.IsZero() {
		p.StartedAt = r.Started.UTC().Format(time.RFC3339)
		p.Started = r.Started.UTC().Format("2006-01-02 15:04:05 UTC")
	}
	p.Counts = []countView{
		{verdictBadge(Fail), r.Counts.Fail},
		{verdictBadge(Warn), r.Counts.Warn},
		{verdictBadge(Pass), r.Counts.Pass},
	}
	if r.Counts.Error > 0 {
		p.Counts = append(p.Counts, countView{statusBadge(Error), r.Counts.Error})
	}
	if r.Counts.Skipped > 0 {
		p.Counts = append(p.Counts, countView{statusBadge(Skipped), r.Counts.Skipped})
	}
	p.Sources = &table{Caption: "Data read", Class: "sources", Head: []string{"source", "format", "rows"}, Num: []bool{false, false, true}}
	for _, s := range r.Sources {
		p.Sources.Rows = append(p.Sources.Rows, []string{s.Path, s.Format, groupDigits(s.Rows)})
	}
	anchors := map[string]bool{}
	charts := 0
	for _, res := range r.Results {
		v, err := newRuleView(res, r.Units)
		if err != nil {
			return nil, fmt.Errorf("html report: rule %s: %w", res.ID, err)
		}
		v.Anchor = anchor(res.ID, anchors)
		for _, c := range v.Charts {
			charts++
			c.ID = "chart-" + strconv.Itoa(charts)
		}
		p.Rules = append(p.Rules, v)
		if res.Status == OK && res.Verdict == Pass {
			p.Passed = append(p.Passed, v)
		} else {
			p.Open = append(p.Open, v)
		}
	}
	return p, nil
}

// anchor returns a unique id attribute for a rule id: the rule id with
// every character other than letters, digits, '.', '_' and '-' replaced,
// and a number added when that is taken.
func anchor(id string, taken map[string]bool) string {
	a := "rule-" + strings.Map(func(r rune) rune {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '.', r == '_', r == '-':
			return r
		}
		return '-'
	}, id)
	for i, b := 2, a; taken[a]; i++ {
		a = b + "-" + strconv.Itoa(i)
	}
	taken[a] = true
	return a
}

func verdictBadge(v Verdict) badge {
	return badge{Class: v.String(), Word: strings.ToUpper(v.String())}
}

func statusBadge(s Status) badge {
	if s == Error {
		return badge{Class: "error", Word: "COULD NOT RUN"}
	}
	return badge{Class: "skipped", Word: "SKIPPED"}
}

func resultBadge(res Result) badge {
	if res.Status != OK {
		return statusBadge(res.Status)
	}
	return verdictBadge(res.Verdict)
}

// directions says which way each tolerance direction gets worse.
var directions = map[string]string{
	"at most":  "at most: higher is worse",
	"at least": "at least: lower is worse",
	"within":   "within: outside the bounds is worse",
}

// newRuleView prepares one result's section.
func newRuleView(res Result, units map[string]string) (*ruleView, error) {
	v := &ruleView{
		ID:        res.ID,
		Check:     res.Check,
		Columns:   columnList(res.Columns, units),
		Badge:     resultBadge(res),
		Measure:   res.Measure.Name + " " + formatMeasure(res.Measure.Unit, float64(res.Measure.Value)),
		Tolerance: thresholds(res.Measure.Unit, res.Tolerance),
		Direction: res.Tolerance.Direction,
		Message:   res.Message,
		Error:     res.Error,
		Position:  res.Policy,
	}
	if d, ok := directions[v.Direction]; ok {
		v.Direction = d
	}
	var charts []*chart
	var err error
	switch {
	case res.Fit != nil:
		v.fit(res)
		charts, err = fitCharts(res, units)
	case res.Extremes != nil:
		v.statistics(res)
		v.extremes(res, units)
		charts, err = extremesCharts(res, units)
	case res.Joint != nil:
		// its estimates (center, cutoff) are in the facts and the table
		v.joint(res)
		var c *chart
		if c, err = jointChart(res); c != nil {
			charts = []*chart{c}
		}
	case res.Drift != nil:
		v.statistics(res)
		v.drift(res, units)
		var c *chart
		if c, err = driftChart(res, units); c != nil {
			charts = []*chart{c}
		}
	case res.Pair != nil:
		v.statistics(res)
		v.pair(res)
		var c *chart
		if c, err = pairChart(res, units); c != nil {
			charts = []*chart{c}
		}
	default:
		v.statistics(res)
	}
	if err != nil {
		return nil, err
	}
	v.Charts = charts
	if res.Segments != nil {
		v.segments(res)
	}
	if res.Offending != nil && res.Status == OK {
		v.Offending = offendingTable(res, units)
	}
	return v, nil
}

// columnList writes a rule's columns with their units: "weight_kg (kg),
// hive_id".
func columnList(cols []string, units map[string]string) string {
	parts := make([]string, len(cols))
	for i, c := range cols {
		parts[i] = axisLabel(c, units)
	}
	return strings.Join(parts, ", ")
}

// statistics adds the test statistic, p-value and estimates of a result
// that has them.
func (v *ruleView) statistics(res Result) {
	if s := res.Statistic; s != nil {
		val := s.Name + " = " + sig4(float64(s.Value))
		if s.N > 0 {
			val += ", n = " + groupDigits(s.N)
		}
		v.Facts = append(v.Facts, fact{"statistic", val})
	}
	if res.PValue != nil {
		v.Facts = append(v.Facts, fact{"p-value", sig4(*res.PValue)})
	}
	if len(res.Estimates) > 0 {
		v.Facts = append(v.Facts, fact{"estimates", estimates(res.Estimates)})
	}
}

// fit adds what a distribution rule found: the family and its
// parameters, the test, the sample, the candidates and where the data
// exceed the fit.
func (v *ruleView) fit(res Result) {
	f := res.Fit
	family := f.Family
	if len(res.Estimates) > 0 {
		family += ": " + estimates(res.Estimates) + " (" + paramSource(res) + ")"
	}
	v.Facts = append(v.Facts, fact{"family", family})
	if s := res.Statistic; s != nil {
		test := f.Test + " " + s.Name + " = " + sig4(float64(s.Value))
		if res.PValue != nil {
			test += ", p-value " + sig4(*res.PValue)
		}
		if s.N > 0 {
			test += ", n = " + groupDigits(s.N)
		}
		if f.DF > 0 {
			test += fmt.Sprintf(", %d degrees of freedom", f.DF)
		}
		v.Facts = append(v.Facts, fact{"test", test})
	}
	method := f.Method.Kind
	if f.Method.Replicates > 0 {
		method += fmt.Sprintf(", %s replicates, seed %d", groupDigits(int64(f.Method.Replicates)), f.Seed)
	}
	if f.Method.Conservative {
		method += ", conservative"
	}
	if f.Method.Source != "" {
		method += ": " + f.Method.Source
	}
	if method != "" {
		v.Facts = append(v.Facts, fact{"p-value from", method})
	}
	values := groupDigits(f.N) + " values"
	if f.Sampled {
		values = fmt.Sprintf("a seeded random sample of %s of %s values (seed %d)", groupDigits(f.SampleSize), groupDigits(f.N), f.Seed)
	}
	v.Facts = append(v.Facts, fact{"fitted on", values})
	if f.Resolution != nil {
		v.Facts = append(v.Facts, fact{"compared at resolution", sig4(float64(*f.Resolution))})
	}
	if len(f.Candidates) > 1 {
		t := &table{
			Caption: "Candidates, best first by AIC then BIC",
			Head:    []string{"family", "AIC", "BIC", "log-likelihood", "parameters"},
			Num:     []bool{false, true, true, true, false},
		}
		for _, c := range f.Candidates {
			if c.Skipped != "" {
				t.Rows = append(t.Rows, []string{c.Family, "", "", "", "not fitted: " + c.Skipped})
				continue
			}
			t.Rows = append(t.Rows, []string{c.Family, fixed1(float64(c.AIC)), fixed1(float64(c.BIC)),
				fixed1(float64(c.LogLik)), estimates(c.Estimates)})
		}
		v.Tables = append(v.Tables, t)
	}
	if len(f.Regions) > 0 {
		what := "values"
		if f.Sampled {
			what = "in the sample"
		}
		t := &table{
			Caption: "Where the data exceed the fit most",
			Head:    []string{"values", "observed share", "expected share", what},
			Num:     []bool{false, true, true, true},
		}
		for _, g := range f.Regions {
			t.Rows = append(t.Rows, []string{regionText(g), formatPercent(float64(g.Observed)),
				formatPercent(float64(g.Expected)), groupDigits(g.Count)})
		}
		v.Tables = append(v.Tables, t)
	}
}

// offendingTable lists a result's offending rows: row number, source and
// line when known, the values of its columns, and the score.
func offendingTable(res Result, units map[string]string) *table {
	off := res.Offending
	t := &table{Class: "offending"}
	listed := len(off.Rows)
	switch {
	case off.Count == 0:
		return nil
	case listed == 0:
		t.Caption = fmt.Sprintf("Offending rows: %s (none listed)", groupDigits(off.Count))
		return t
	case int64(listed) < off.Count:
		t.Caption = fmt.Sprintf("Offending rows: %s, the %d worst listed", groupDigits(off.Count), listed)
	default:
		t.Caption = fmt.Sprintf("Offending rows: %s, worst first", groupDigits(off.Count))
	}
	multi, lines := false, false
	for _, row := range off.Rows {
		multi = multi || row.Source != ""
		lines = lines || row.Line > 0
	}
	t.Head, t.Num = []string{"row"}, []bool{true}
	if multi {
		t.Head, t.Num = append(t.Head, "source"), append(t.Num, false)
	}
	if lines {
		t.Head, t.Num = append(t.Head, "line"), append(t.Num, true)
	}
	cols := valueColumns(res)
	for _, c := range cols {
		t.Head, t.Num = append(t.Head, axisLabel(c, units)), append(t.Num, numeric(off.Rows, c))
	}
	t.Head, t.Num = append(t.Head, "score"), append(t.Num, true)
	drivers := hasContributions(off.Rows)
	if drivers {
		t.Head, t.Num = append(t.Head, "columns contributing most"), append(t.Num, false)
	}
	predicted := false
	for _, row := range off.Rows {
		predicted = predicted || row.Fitted != nil
	}
	if predicted && len(res.Columns) >= 2 {
		t.Head, t.Num = append(t.Head, res.Columns[1]+" on the line"), append(t.Num, true)
	}
	for _, row := range off.Rows {
		cells := []string{strconv.FormatInt(row.Row, 10)}
		if multi {
			cells = append(cells, row.Source)
		}
		if lines {
			line := ""
			if row.Line > 0 {
				line = strconv.FormatInt(row.Line, 10)
			}
			cells = append(cells, line)
		}
		for _, c := range cols {
			cells = append(cells, formatValue(row.Values[c]))
		}
		cells = append(cells, strconv.FormatFloat(float64(row.Score), 'g', 6, 64))
		if drivers {
			cells = append(cells, contributionText(row.Contributions))
		}
		if predicted && len(res.Columns) >= 2 {
			fitted := ""
			if row.Fitted != nil {
				fitted = sig4(float64(*row.Fitted))
			}
			cells = append(cells, fitted)
		}
		t.Rows = append(t.Rows, cells)
	}
	if rest := off.Count - int64(listed); rest > 0 {
		t.Note = fmt.Sprintf("… and %s more (--max-rows-listed sets how many are listed)", groupDigits(rest))
	}
	return t
}

// numeric reports whether every listed value of col is a number, or
// missing, so that the column is aligned right.
func numeric(rows []Row, col string) bool {
	for _, r := range rows {
		if v := r.Values[col]; v != nil {
			if _, ok := number(v); !ok {
				return false
			}
		}
	}
	return true
}

// extremes adds what an extremes rule fitted: the thresholds, the center
// and scale, the counts on each side, the steps of an ESD test, and what
// the rows' scores mean.
func (v *ruleView) extremes(res Result, units map[string]string) {
	e := res.Extremes
	col := ""
	if len(res.Columns) > 0 {
		col = res.Columns[0]
	}
	v.Facts = append(v.Facts, fact{"method", e.Method})
	below, above := "below ", "above "
	if e.Method == "esd" || e.Method == "grubbs" { // the least extreme value flagged
		below, above = "at or below ", "at or above "
	}
	var limits []string
	if e.Lower != nil {
		limits = append(limits, below+withUnit(float64(*e.Lower), col, units))
	}
	if e.Upper != nil {
		limits = append(limits, above+withUnit(float64(*e.Upper), col, units))
	}
	if len(limits) > 0 {
		v.Facts = append(v.Facts, fact{"extreme", strings.Join(limits, " or ")})
	}
	center, scale := centerNames(e.Method)
	if c := float64(e.Center); finite(c) && center != "" {
		v.Facts = append(v.Facts, fact{center, withUnit(c, col, units)})
	}
	if sc := float64(e.Scale); finite(sc) && scale != "" {
		v.Facts = append(v.Facts, fact{scale, withUnit(sc, col, units)})
	}
	judged := fmt.Sprintf("%s below, %s above, of %s values judged", groupDigits(e.Below), groupDigits(e.Above), groupDigits(e.N))
	if e.NaN > 0 {
		judged += fmt.Sprintf(" (%s NaN values not judged)", groupDigits(e.NaN))
	}
	v.Facts = append(v.Facts, fact{"extreme values", judged})
	if e.Score != "" {
		v.Facts = append(v.Facts, fact{"score", e.Score})
	}
	if len(e.Steps) > 0 {
		t := &table{
			Caption: "Generalized ESD steps (outliers up to the last step with R above lambda)",
			Head:    []string{"step", "value", "R", "lambda"},
			Num:     []bool{true, true, true, true},
		}
		for i, st := range e.Steps {
			t.Rows = append(t.Rows, []string{strconv.Itoa(i + 1), sig4(float64(st.Value)), sig4(float64(st.R)), sig4(float64(st.Lambda))})
		}
		v.Tables = append(v.Tables, t)
	}
}

// joint adds what a joint rule estimated: the estimator and its sample,
// the rows judged, the center and covariance, and the cutoff.
func (v *ruleView) joint(res Result) {
	j := res.Joint
	how := "classical: mean and sample covariance"
	if j.Estimator == "fast-mcd" {
		how = "robust: FAST-MCD, reweighted"
		if j.Factor != nil {
			how += ", consistency factor " + sig4(float64(*j.Factor))
		}
		if j.Subset > 0 {
			how += fmt.Sprintf(", %s rows in the raw subset, %s kept", groupDigits(int64(j.Subset)), groupDigits(int64(j.Kept)))
		}
		if j.Sampled {
			how += fmt.Sprintf(", on a seeded sample of %s rows (seed %d)", groupDigits(j.SampleSize), j.Seed)
		}
	}
	v.Facts = append(v.Facts, fact{"estimate", how})
	judged := groupDigits(j.N) + " rows"
	if j.Skipped > 0 {
		judged += fmt.Sprintf(" (%s with a missing or infinite value not judged)", groupDigits(j.Skipped))
	}
	v.Facts = append(v.Facts, fact{"judged", judged})
	v.Facts = append(v.Facts, fact{"cutoff", fmt.Sprintf("squared distance above %s (chi-square %s quantile, %d degrees of freedom)",
		sig4(float64(j.Cutoff)), sig4(float64(j.Quantile)), j.DF)})
	k := len(res.Columns)
	if len(j.Center) != k || len(j.Covariance) != k {
		return
	}
	t := &table{Caption: "Center and covariance", Head: []string{"column", "center"}, Num: []bool{false, true}}
	for _, c := range res.Columns {
		t.Head, t.Num = append(t.Head, "cov. "+c), append(t.Num, true)
	}
	for i, c := range res.Columns {
		if len(j.Covariance[i]) != k {
			return
		}
		row := []string{c, sig4(float64(j.Center[i]))}
		for _, x := range j.Covariance[i] {
			row = append(row, sig4(float64(x)))
		}
		t.Rows = append(t.Rows, row)
	}
	v.Tables = append(v.Tables, t)
}
