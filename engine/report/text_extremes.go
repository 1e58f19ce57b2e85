package report

import (
	"fmt"
	"math"
	"strings"
	"text/tabwriter"
)

// maxContributionsShown is how many columns a listed row names as
// contributing most to its distance.
const maxContributionsShown = 3

// extremes prints what an extremes rule fitted: the thresholds, the
// center and scale, the counts on each side, the steps of an ESD test, and
// what the rows' scores mean.
func (p *printer) extremes(res Result) {
	e := res.Extremes
	below, above := "below ", "above "
	if e.Method == "esd" || e.Method == "grubbs" { // the least extreme value flagged
		below, above = "at or below ", "at or above "
	}
	var limits []string
	if e.Lower != nil {
		limits = append(limits, below+sig4(float64(*e.Lower)))
	}
	if e.Upper != nil {
		limits = append(limits, above+sig4(float64(*e.Upper)))
	}
	if len(limits) > 0 {
		p.printf("  extreme: %s", strings.Join(limits, " or "))
		center, scale := centerNames(e.Method)
		if c := float64(e.Center); !math.IsNaN(c) && center != "" {
			p.printf(" · %s %s", center, sig4(c))
		}
		if s := float64(e.Scale); !math.IsNaN(s) && scale != "" {
			p.printf(" · %s %s", scale, sig4(s))
		}
		p.printf("\n")
	}
	p.printf("  %s below, %s above, of %s values judged\n", groupDigits(e.Below), groupDigits(e.Above), groupDigits(e.N))
	if len(e.Steps) > 0 {
		p.printf("  generalized ESD steps (an outlier up to the last step with R above lambda):\n")
		var b strings.Builder
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "    step\tvalue\tR\tlambda\t\n")
		for i, s := range e.Steps {
			fmt.Fprintf(tw, "    %d\t%s\t%s\t%s\t\n", i+1, sig4(float64(s.Value)), sig4(float64(s.R)), sig4(float64(s.Lambda)))
		}
		tw.Flush()
		p.printf("%s", b.String())
	}
	if res.Offending != nil && len(res.Offending.Rows) > 0 {
		p.printf("  rows, most extreme first (score: %s):\n", e.Score)
	}
}

// centerNames names the center and scale of an extremes method.
func centerNames(method string) (center, scale string) {
	switch method {
	case "tukey":
		return "median", "IQR"
	case "robust-z":
		return "median", "MAD"
	case "tail":
		return "median", ""
	}
	return "mean", "sd"
}

// joint prints what a joint rule estimated: the estimator and its sample,
// the rows judged, the center, and the cutoff.
func (p *printer) joint(res Result) {
	j := res.Joint
	how := "classical estimate (mean and sample covariance)"
	if j.Estimator == "fast-mcd" {
		how = fmt.Sprintf("robust estimate (FAST-MCD, reweighted, consistency factor %s)", sig4(float64(orNaN(j.Factor))))
		if j.Sampled {
			how += fmt.Sprintf(" on a seeded sample of %s rows (seed %d)", groupDigits(j.SampleSize), j.Seed)
		}
	}
	p.printf("  %s; %s rows judged", how, groupDigits(j.N))
	if j.Skipped > 0 {
		p.printf(", %s with a missing or non-finite value not judged", groupDigits(j.Skipped))
	}
	p.printf("\n")
	if len(j.Center) == len(res.Columns) {
		parts := make([]string, len(j.Center))
		for i, c := range j.Center {
			parts[i] = res.Columns[i] + " " + sig4(float64(c))
		}
		p.printf("  center: %s\n", strings.Join(parts, ", "))
	}
	p.printf("  cutoff: squared distance above %s (chi-square %s quantile, %d degrees of freedom)\n", sig4(float64(j.Cutoff)),
		sig4(float64(j.Quantile)), j.DF)
	if res.Offending != nil && len(res.Offending.Rows) > 0 {
		p.printf("  rows, farthest first (score: squared Mahalanobis distance, which the columns' contributions add up to):\n")
	}
}

func orNaN(n *Number) Number {
	if n == nil {
		return Number(math.NaN())
	}
	return *n
}

// hasContributions reports whether any listed row carries contributions.
func hasContributions(rows []Row) bool {
	for _, r := range rows {
		if len(r.Contributions) > 0 {
			return true
		}
	}
	return false
}

// contributionText names the columns contributing most to a row's
// distance: "humidity_pct 31.2, co2_ppm 4.07".
func contributionText(cs []Contribution) string {
	parts := make([]string, 0, maxContributionsShown)
	for _, c := range cs[:min(len(cs), maxContributionsShown)] {
		parts = append(parts, c.Column+" "+sig4(float64(c.Value)))
	}
	return strings.Join(parts, ", ")
}
