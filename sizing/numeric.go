package sizing

import "math"

// Small-argument forms of the functions the step solutions need. In a logged
// profile most steps change the bank voltage by a few parts per million, so
// the arguments are tiny; a short Taylor series is then exact to double
// precision and far cheaper than the library call. Beyond the threshold the
// library function is used.

// log1pSmallLimit bounds |x| for the series in log1p: the first term left
// out, x^8/8, is below 1.3e-25, i.e. 1.3e-22 relative to the result ≈ x.
// Two shorter tiers serve the tiny arguments most steps give: below 2e-5
// the terms to x^5 leave out x^6/6 < 1.1e-29 (5e-25 relative), below 1e-8
// the terms to x^2 leave out x^3/3 (3.4e-17 relative; rounding is 1.1e-16).
const log1pSmallLimit = 1e-3

// log1p returns ln(1 + x), exact to double precision.
func log1p(x float64) float64 {
	ax := abs(x)
	switch {
	case ax < 1e-8:
		return x - 0.5*x*x
	case ax < log1pSmallLimit:
		return x * log1pSeries(x, ax)
	}
	return math.Log1p(x)
}

// log1pOverX returns ln(1 + x)/x, with its limit 1 at x = 0.
func log1pOverX(x float64) float64 {
	ax := abs(x)
	switch {
	case ax < 1e-8:
		return 1 - 0.5*x
	case ax < log1pSmallLimit:
		return log1pSeries(x, ax)
	}
	return math.Log1p(x) / x
}

// log1pSeries returns ln(1 + x)/x for 1e-8 ≤ |x| = ax < log1pSmallLimit:
//
//	ln(1+x)/x = 1 − x/2 + x²/3 − x³/4 + x⁴/5 − … (Abramowitz & Stegun 4.1.24)
//
// to x⁴ below 2e-5, else to x⁶ (see log1pSmallLimit for what is left
// out). The terms are summed in pairs (Estrin's scheme) rather than by
// Horner's rule: the same polynomial, but half as many operations that
// wait on each other, which is what a step's cost is made of.
func log1pSeries(x, ax float64) float64 {
	x2 := x * x
	lo := (1 - 0.5*x) + x2*(1.0/3-0.25*x)
	if ax < 2e-5 {
		return lo + x2*x2*(1.0/5)
	}
	return lo + x2*x2*((1.0/5-(1.0/6)*x)+x2*(1.0/7))
}

// expm1 returns e^x − 1, exact to double precision.
func expm1(x float64) float64 {
	if math.Abs(x) < log1pSmallLimit {
		// e^x − 1 = x + x²/2! + … + x⁷/7! (A&S 4.2.1); x⁸/8! < 2.5e-29
		return x * (1 + x*(1.0/2+x*(1.0/6+x*(1.0/24+x*(1.0/120+x*(1.0/720+x*(1.0/5040)))))))
	}
	return math.Expm1(x)
}

// expm1OverX returns (e^x − 1)/x, with its limit 1 at x = 0.
func expm1OverX(x float64) float64 {
	if math.Abs(x) < log1pSmallLimit {
		return 1 + x*(1.0/2+x*(1.0/6+x*(1.0/24+x*(1.0/120+x*(1.0/720+x*(1.0/5040))))))
	}
	return math.Expm1(x) / x
}

// rootBracket finds a root of f in [lo, hi], where f(lo) and f(hi) have
// opposite signs (or one is zero), by the Illinois variant of regula falsi
// with a bisection safeguard. It stops when the bracket is within
// 4 ulp·|x| + absTol. It never returns a value outside [lo, hi].
func rootBracket(f func(float64) float64, lo, hi, absTol float64) float64 {
	flo, fhi := f(lo), f(hi)
	if flo == 0 {
		return lo
	}
	if fhi == 0 {
		return hi
	}
	side := 0
	for i := 0; i < 200; i++ {
		if hi-lo <= 4*eps*math.Max(math.Abs(lo), math.Abs(hi))+absTol {
			break
		}
		x := (lo*fhi - hi*flo) / (fhi - flo)
		if !(x > lo && x < hi) || i%8 == 7 {
			x = lo + (hi-lo)/2
		}
		fx := f(x)
		if fx == 0 {
			return x
		}
		if (fx < 0) == (flo < 0) {
			lo, flo = x, fx
			if side == -1 {
				fhi /= 2
			}
			side = -1
		} else {
			hi, fhi = x, fx
			if side == 1 {
				flo /= 2
			}
			side = 1
		}
	}
	return lo + (hi-lo)/2
}

const eps = 0x1p-52

// expm1MinusXOverX2 returns (e^x − 1 − x)/x², with its limit ½ at x = 0.
// The series (A&S 4.2.1 shifted by two terms) runs to |x| < 0.05, where the
// direct form would lose digits to cancellation; the first term left out,
// x¹⁰/12!, is below 2.1e-22.
func expm1MinusXOverX2(x float64) float64 {
	if math.Abs(x) < 0.05 {
		return 1.0/2 + x*(1.0/6+x*(1.0/24+x*(1.0/120+x*(1.0/720+x*(1.0/5040+x*(1.0/40320+x*(1.0/362880+x*(1.0/3628800+x*(1.0/39916800)))))))))
	}
	return (math.Expm1(x) - x) / (x * x)
}
