package dist

import (
	"encoding/binary"
	"math"
	"strconv"
	"strings"
	"testing"
)

// FuzzFit feeds arbitrary samples to every family: Fit must never panic,
// and a fit it returns must have parameters in their domains and a finite
// log-likelihood.
func FuzzFit(f *testing.F) {
	for _, s := range [][]float64{
		{1, 2, 3}, {0, 0, 1}, {0.5, 0.25}, {-1, 1e300, 1e-300}, {3, 3, 3, 3},
		{1, 1, 1, 2, 20}, {math.NaN()}, {5e-324, 1},
	} {
		b := make([]byte, 8*len(s))
		for i, v := range s {
			binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
		}
		f.Add(b)
	}
	fams := Families()
	f.Fuzz(func(t *testing.T, b []byte) {
		x := make([]float64, len(b)/8)
		for i := range x {
			x[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
		}
		for _, fam := range fams {
			if fam.Kind() == Categorical {
				continue
			}
			if fam.Name() == "binomial" {
				var err error
				if fam, err = fam.Fix(map[string]float64{"n": 20}); err != nil {
					t.Fatal(err)
				}
			}
			fit, err := fam.Fit(x)
			if err != nil {
				if err.Error() == "" || strings.HasSuffix(err.Error(), ".") {
					t.Errorf("%s: malformed message %q", fam, err)
				}
				continue
			}
			if math.IsNaN(fit.LogLik) || math.IsInf(fit.LogLik, 0) {
				t.Errorf("%s on %v: log-likelihood %v", fam, x, fit.LogLik)
			}
			for _, p := range fam.Params() {
				if v := fit.Dist.Param(p.Name); !p.accepts(v) {
					t.Errorf("%s on %v: %s = %v outside %s", fam, x, p.Name, v, p.Domain())
				}
			}
		}
	})
}

// FuzzLeadingDigits writes a decimal with up to 15 significant digits,
// reads it as a float64 and expects LeadingDigits to return its first
// digits.
func FuzzLeadingDigits(f *testing.F) {
	f.Add(uint64(3), int16(-1), uint8(1))
	f.Add(uint64(999999999999999), int16(-20), uint8(2))
	f.Add(uint64(115), int16(-2), uint8(3))
	f.Fuzz(func(t *testing.T, mant uint64, exp int16, k uint8) {
		mant %= 1e15
		if mant == 0 || k == 0 || k > 15 || exp < -300 || exp > 290 {
			return
		}
		s := strconv.FormatUint(mant, 10) + "e" + strconv.Itoa(int(exp))
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		digits := strconv.FormatUint(mant, 10)
		for len(digits) < int(k) {
			digits += "0"
		}
		want, _ := strconv.Atoi(digits[:k])
		if got, ok := LeadingDigits(x, int(k)); !ok || got != want {
			t.Errorf("LeadingDigits(%s = %v, %d) = %d, %v; want %d", s, x, k, got, ok, want)
		}
	})
}
