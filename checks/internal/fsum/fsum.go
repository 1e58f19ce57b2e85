// Package fsum holds the compensated floating-point sum that the
// statistical packages of checks share.
package fsum

import "math"

// Neumaier is a compensated sum (Neumaier 1974, "Rundungsfehleranalyse
// einiger Verfahren zur Summation endlicher Summen", ZAMM 54): Sum plus
// Carry, the rounding error Sum has lost so far. Unlike Kahan's sum it stays
// exact when an added term is larger than the running sum.
type Neumaier struct {
	Sum, Carry float64
}

// Add adds x to s.
func (s *Neumaier) Add(x float64) {
	t := s.Sum + x
	if math.Abs(s.Sum) >= math.Abs(x) {
		s.Carry += (s.Sum - t) + x
	} else {
		s.Carry += (x - t) + s.Sum
	}
	s.Sum = t
}

// Merge adds the sum t, kept apart so far, to s.
func (s *Neumaier) Merge(t Neumaier) {
	s.Add(t.Sum)
	s.Carry += t.Carry
}

// Value is the sum.
func (s Neumaier) Value() float64 { return s.Sum + s.Carry }
