package report

import "math"

// FitResiduals fits residual = constant + scale · distance to the lines'
// mean residuals by weighted least squares (weights 1/σ²), removing the
// worst line while its standardized residual from the fit exceeds critical,
// so that a few blunders do not bend the fit while a systematic error
// common to all lines (a wrong prism constant, a wrong ppm) stays in it.
// σ of the terms come from the a posteriori variance factor. It returns
// nil with fewer than three lines or without a spread of distances.
//
//	[Σw   Σwx ] [c]   [Σwy ]
//	[Σwx  Σwx²] [s] = [Σwxy],  s0² = Σw v² / (n − 2),  C = s0² N⁻¹
func FitResiduals(lines []Line, critical float64) *Fit {
	var pts []fitPoint
	for _, l := range lines {
		if l.SigmaMM > 0 {
			pts = append(pts, fitPoint{x: l.Geodesic, y: l.ResidualMM, w: 1 / (l.SigmaMM * l.SigmaMM)})
		}
	}
	return fitLine(pts, critical)
}

// maxFitRounds bounds the rounds of removing blunders from the fit.
const maxFitRounds = 64

// fitPoint is one line for the fit: distance m, residual mm, weight 1/mm².
type fitPoint struct{ x, y, w float64 }

// fitLine is FitResiduals on prepared points; it reorders pts.
func fitLine(pts []fitPoint, critical float64) *Fit {
	for round := 0; ; round++ {
		if len(pts) < 3 {
			return nil
		}
		var sw, swx, swxx, swy, swxy float64
		for _, p := range pts {
			sw += p.w
			swx += p.w * p.x
			swxx += p.w * p.x * p.x
			swy += p.w * p.y
			swxy += p.w * p.x * p.y
		}
		det := sw*swxx - swx*swx
		if !(det > 1e-12*sw*swxx) { // all lines of (nearly) one length
			return nil
		}
		c := (swxx*swy - swx*swxy) / det
		s := (sw*swxy - swx*swy) / det
		// t is a line's standardized residual from the fit: |v| over the
		// σ of v, which is σ² less the fit's variance at x. It is
		// computed again where it is needed rather than kept, which would
		// cost 8 bytes a line at the summary's peak.
		t := func(p fitPoint) float64 {
			v := p.y - (c + s*p.x)
			fitVar := (swxx - 2*p.x*swx + p.x*p.x*sw) / det
			if qv := 1/p.w - fitVar; qv > 0 {
				return math.Abs(v) / math.Sqrt(qv)
			}
			return 0
		}
		var vpv float64
		worstT := 0.0
		for _, p := range pts {
			v := p.y - (c + s*p.x)
			vpv += p.w * v * v
			worstT = math.Max(worstT, t(p))
		}
		n := len(pts)
		s0sq := vpv / float64(n-2)
		// Data snooping with the a priori σ (Baarda): the a posteriori
		// factor would be inflated by the very blunder being sought. Each
		// round drops the worst line and any nearly as bad (over half its
		// test value), so that many blunders cost few rounds; after 64
		// rounds the fit stands as it is.
		if worstT > critical && n > 3 && round < maxFitRounds {
			cut := math.Max(critical, worstT/2)
			kept := pts[:0]
			for _, p := range pts {
				if t(p) <= cut {
					kept = append(kept, p)
				}
			}
			pts = kept
			continue
		}
		sc := math.Sqrt(s0sq * swxx / det)
		ss := math.Sqrt(s0sq*sw/det) * 1e3 // mm per m → ppm
		f := &Fit{N: n, ConstantMM: c, ConstantSigma: sc, ScalePPM: s * 1e3, ScaleSigma: ss, VarianceFactor: s0sq}
		f.ConstantSignificant = sc > 0 && math.Abs(c)/sc > critical
		f.ScaleSignificant = ss > 0 && math.Abs(f.ScalePPM)/ss > critical
		return f
	}
}
