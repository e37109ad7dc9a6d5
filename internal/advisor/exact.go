package advisor

import (
	"math"
	"math/big"
)

// exactPrec holds any sum of float64 values exactly: their bits span 2^-1074 to 2^1024,
// plus room for carries (math/big keeps a mantissa of at most this many bits).
const exactPrec = 1074 + 1024 + 64

// exactSum is a sum of float64 values kept without rounding, so one term can be taken
// out and another put in, and the result read correctly rounded, in constant time
// however many terms it holds. Infinities and NaNs are counted beside it.
type exactSum struct {
	finite         big.Float
	posInf, negInf int
	nan            int
}

// add puts x into the sum.
func (s *exactSum) add(x float64) { s.addSigned(x, 1) }

func (s *exactSum) addSigned(x float64, sign int) {
	switch {
	case math.IsNaN(x):
		s.nan += sign
	case math.IsInf(x, 1):
		s.posInf += sign
	case math.IsInf(x, -1):
		s.negInf += sign
	default:
		var t big.Float
		t.SetFloat64(x)
		if sign < 0 {
			t.Neg(&t)
		}
		if s.finite.Prec() == 0 {
			s.finite.SetPrec(exactPrec)
		}
		s.finite.Add(&s.finite, &t)
	}
}

// swap is the sum with out taken out and in put in, rounded to the nearest float64;
// out must be a term of the sum. The sum itself is unchanged.
func (s *exactSum) swap(out, in float64) float64 {
	var t exactSum
	t.posInf, t.negInf, t.nan = s.posInf, s.negInf, s.nan
	t.finite.SetPrec(exactPrec).Set(&s.finite)
	t.addSigned(out, -1)
	t.add(in)
	switch {
	case t.nan > 0 || (t.posInf > 0 && t.negInf > 0):
		return math.NaN()
	case t.posInf > 0:
		return math.Inf(1)
	case t.negInf > 0:
		return math.Inf(-1)
	}
	v, _ := t.finite.Float64()
	return v
}
