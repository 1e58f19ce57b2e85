package relate

import "testing"

func TestEnumNames(t *testing.T) {
	for _, c := range []struct {
		got  func() ([]byte, error)
		want string
	}{
		{Pearson.MarshalText, "pearson"},
		{Spearman.MarshalText, "spearman"},
		{Kendall.MarshalText, "kendall"},
		{CorrMethod(9).MarshalText, "correlation(9)"},
		{Exact.MarshalText, "exact"},
		{Edgeworth.MarshalText, "edgeworth"},
		{StudentT.MarshalText, "student-t"},
		{Normal.MarshalText, "normal"},
		{PMethod(0).MarshalText, "p-method(0)"},
	} {
		b, err := c.got()
		if err != nil || string(b) != c.want {
			t.Errorf("got %q, %v; want %q", b, err, c.want)
		}
	}
}
