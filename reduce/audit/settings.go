package audit

import (
	"errors"
	"math"

	"github.com/geored/geored/reduce"
)

// Settings are the job's acceptance rules for an audit.
type Settings struct {
	// Tolerance is the acceptance limit a mm + b ppm (or a named class's)
	// and ToleranceText says it in words with the class and its source,
	// printed with every verdict.
	Tolerance     reduce.DistanceSpec
	ToleranceText string
	// Critical is the bound on |difference − signature| / σ within which
	// a signature of a known error fits, and on |w| above which a
	// difference is significant (e.g. reduce.DefaultCriticalValue).
	Critical float64
	// ControlSigma is the σ of a distance between two control marks,
	// metres (0: control taken as errorless); it is added in quadrature
	// to the stated σ of every delivered value.
	ControlSigma float64
}

func (s *Settings) valid() error {
	if !(s.Critical > 0) || math.IsInf(s.Critical, 0) {
		return errors.New("audit settings: want a positive critical value")
	}
	if !(s.ControlSigma >= 0) {
		return errors.New("audit settings: want a control σ of 0 or more")
	}
	_, err := s.Tolerance.At(1)
	return err
}

// Verdict is a delivered value's comparison with the tolerance.
type Verdict struct {
	Tolerance float64 // at the line's length, metres, at the tolerance's own level
	Margin    float64 // Tolerance − |misclosure|, metres: negative when it fails
	Pass      bool
}

func verdict(s *Settings, length, misclosure float64) (Verdict, error) {
	tol, err := s.Tolerance.At(length)
	if err != nil {
		return Verdict{}, err
	}
	m := tol - math.Abs(misclosure)
	return Verdict{Tolerance: tol, Margin: m, Pass: m >= 0}, nil
}
