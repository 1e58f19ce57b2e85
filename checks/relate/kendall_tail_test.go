package relate

import (
	"math"
	"testing"
)

// TestKendallFarTail checks the normal-approximation p-value far in the
// tail, where 1 - erf would underflow to 0. Reference: R 4.2.2,
//
//	x <- 1:200; y <- x + ((x*7919) %% 13)
//	cor.test(x, y, method = "kendall", exact = FALSE)
//
// which gives z = 20.270342719595277 and p = 2.3501452380493211e-91 (ties in
// y make R use the normal approximation with the tie-corrected variance).
func TestKendallFarTail(t *testing.T) {
	x := make([]float64, 200)
	y := make([]float64, 200)
	for i := range x {
		v := float64(i + 1)
		x[i] = v
		y[i] = v + float64((int(v)*7919)%13)
	}
	c, err := KendallTest(x, y)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := c.Statistic.Value, 20.270342719595277; math.Abs(got-want) > 1e-9*want {
		t.Errorf("z = %.17g, want %.17g", got, want)
	}
	if got, want := c.PValue, 2.3501452380493211e-91; math.Abs(got-want) > 1e-6*want {
		t.Errorf("p = %.17g, want %.17g (R)", got, want)
	}
}
