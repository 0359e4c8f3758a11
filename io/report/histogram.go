package report

import "math"

// residualHistogram counts residuals (mm) in bins, for a median and a
// robust spread over any number of observations in fixed memory (about
// 400 KB, made at the first residual).
//
// The bins are 0.01 mm wide for |r| < 20.48 mm; beyond, each doubling of
// |r| is cut into histSub bins of equal width, so a bin is at most 1/1024
// of its residual wide (0.1 %); residuals beyond about ±172 km, which no
// distance gives, share the last bin. A quantile read from it is the
// middle of the bin that holds it: within 0.005 mm of the exact
// quantile below 20 mm, and within 0.05 % beyond. (The layout is that of a
// log-linear, "high dynamic range", histogram: a binary exponent picks the
// doubling and the mantissa's leading bits the bin within it.)
type residualHistogram struct {
	counts []uint64 // by bin: negative residuals below histMag, mirrored
	n      uint64
}

const (
	histUnit    = 0.01 // mm: the width of the finest bins
	histSubBits = 10
	histSub     = 1 << histSubBits // bins in the first 10.24 mm and in each doubling past it
	histOctaves = 24               // doublings past histSub units: up to 1024·2²⁴·0.01 mm ≈ 172 km
	histMag     = histSub * (1 + histOctaves)
)

// add counts residual r, in mm.
func (h *residualHistogram) add(r float64) {
	if h.counts == nil {
		h.counts = make([]uint64, 2*histMag)
	}
	h.n++
	m := magnitudeBin(math.Abs(r) / histUnit)
	if r >= 0 {
		h.counts[histMag+m]++
	} else {
		h.counts[histMag-1-m]++
	}
}

// magnitudeBin is the bin of v = |r| in units of histUnit (v ≥ 0).
func magnitudeBin(v float64) int {
	if v < histSub {
		return int(v)
	}
	bits := math.Float64bits(v)
	oct := int(bits>>52&0x7ff) - 1023 - histSubBits // v in [2^(10+oct), 2^(11+oct))
	if oct >= histOctaves {                         // NaN and infinities too
		return histMag - 1
	}
	return histSub + oct*histSub + int(bits>>(52-histSubBits)&(histSub-1))
}

// magnitudeEdges are the lower edge and width of magnitude bin m, in
// units of histUnit.
func magnitudeEdges(m int) (lo, width float64) {
	if m < histSub {
		return float64(m), 1
	}
	oct, sub := (m-histSub)/histSub, (m-histSub)%histSub
	width = math.Ldexp(1, oct)
	return width * float64(histSub+sub), width
}

// binMiddle is the middle of bin i, in mm, and half its width.
func binMiddle(i int) (mid, half float64) {
	m := i - histMag
	sign := 1.0
	if m < 0 {
		m, sign = -1-m, -1
	}
	lo, w := magnitudeEdges(m)
	return sign * (lo + w/2) * histUnit, w / 2 * histUnit
}

// merged is the histogram of both h and o.
func (h *residualHistogram) merged(o *residualHistogram) residualHistogram {
	if o.n == 0 {
		return *h
	}
	if h.n == 0 {
		return *o
	}
	out := residualHistogram{counts: make([]uint64, len(h.counts)), n: h.n + o.n}
	for i := range out.counts {
		out.counts[i] = h.counts[i] + o.counts[i]
	}
	return out
}

// medianMAD returns the median of the residuals counted and their median
// absolute deviation from it, both in mm, each read from the middles of
// the bins (see residualHistogram). Zero without residuals.
//
// The MAD is the median of |r − median|: each bin's residuals are taken
// at its middle, and the bins are met in order of their distance from the
// median, walking outwards on both sides.
func (h *residualHistogram) medianMAD() (median, mad float64) {
	if h.n == 0 {
		return 0, 0
	}
	// The order statistics of ranks lo and hi (0-based) are the median's:
	// one rank for an odd count, the two middle ones for an even count.
	lo, hi := (h.n-1)/2, h.n/2
	var seen uint64
	var a, b float64
	split := 0 // the first bin whose middle is at or above the median
	for i, c := range h.counts {
		if c == 0 {
			continue
		}
		mid, _ := binMiddle(i)
		if seen <= lo && lo < seen+c {
			a = mid
		}
		if seen <= hi && hi < seen+c {
			b = mid
			break
		}
		seen += c
	}
	median = (a + b) / 2
	for split < len(h.counts) {
		if mid, _ := binMiddle(split); mid >= median {
			break
		}
		split++
	}
	// Walk outwards from the median, nearer side first.
	l, r := split-1, split
	seen = 0
	var da, db float64
	for seen <= hi {
		var d float64
		var c uint64
		lm, rm := math.Inf(1), math.Inf(1)
		if l >= 0 {
			mid, _ := binMiddle(l)
			lm = median - mid
		}
		if r < len(h.counts) {
			mid, _ := binMiddle(r)
			rm = mid - median
		}
		if lm <= rm {
			d, c = lm, h.counts[l]
			l--
		} else {
			d, c = rm, h.counts[r]
			r++
		}
		if c == 0 {
			continue
		}
		if seen <= lo && lo < seen+c {
			da = d
		}
		if seen <= hi && hi < seen+c {
			db = d
		}
		seen += c
	}
	return median, (da + db) / 2
}

// madToSigma makes the median absolute deviation a consistent estimate of
// σ for normally distributed residuals: 1/Φ⁻¹(3/4) = 1.4826 (Hampel 1974,
// "The influence curve and its role in robust estimation", JASA 69;
// Rousseeuw & Croux 1993, "Alternatives to the median absolute
// deviation", JASA 88, who call the product the MAD's scale estimate)
// [memory]. Φ⁻¹(3/4) = 0.6744897..., whose inverse is 1.482602...
const madToSigma = 1.4826
