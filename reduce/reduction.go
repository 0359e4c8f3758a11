package reduce

import "github.com/golang/geo/s1"

// Observation is one observed slope distance, as read from a file and
// converted to metres and radians.
type Observation struct {
	SlopeDistance    float64     // raw slope distance as stored, metres
	Zenith           s1.Angle    // observed zenith angle (needed on the zenith route)
	InstrumentHeight float64     // HI, metres
	TargetHeight     float64     // HT, metres
	PrismConstant    float64     // of the target used, metres
	Meteorology      Meteorology // what the row recorded of the air

	// FieldPrismConstant is the prism constant the field instrument
	// applied on this shot, metres, where HasFieldPrismConstant; without
	// it the instrument applied Job.Field.PrismConstant.
	FieldPrismConstant    float64
	HasFieldPrismConstant bool
	// FieldPPM is the ppm the field instrument applied on this shot,
	// where HasFieldPPM; without it the instrument applied Job.Field.PPM.
	FieldPPM    float64
	HasFieldPPM bool
}

// field is what the field instrument applied to this observation: the
// job's field settings, with the shot's own prism constant and ppm where
// it has them.
func (obs *Observation) field(job *Job) FieldSettings {
	f := job.Field
	if obs.HasFieldPrismConstant {
		f.PrismConstant = obs.FieldPrismConstant
	}
	if obs.HasFieldPPM {
		f.PPM = obs.FieldPPM
	}
	return f
}

// Job is the per-job configuration of the chain.
type Job struct {
	Instrument        Instrument
	Field             FieldSettings // what the field instrument already applied
	Carrier           Carrier
	DefaultAtmosphere Atmosphere // used where a row recorded none
	K                 float64    // coefficient of refraction, e.g. 0.13
	Budget            Budget
	Test              Test
}

// Reduction keeps every stage of the reduction of one observation.
type Reduction struct {
	Instrument        InstrumentResult
	FirstVelocity     FirstVelocityResult
	SecondVelocity    SecondVelocityResult
	Heights           LineHeights
	Geometry          GeometryResult
	Grid              GridResult
	Uncertainty       UncertaintyResult
	HeightCheck       HeightCheckResult // the reflector's height against its zenith angle (heights route only)
	EllipsoidResidual ResidualResult    // Geometry.Arc against Line.Inverse.Distance
	GridResidual      ResidualResult    // Grid.GridDistance against Line.GridDistance
}

// Reduce runs the whole chain for one observation on a prepared line, with
// the marks' heights at its ends. If mark B's height is unknown (the zero
// MarkHeight) the zenith route is taken and the target mark's height is
// derived from the zenith angle; the mean mark height for the elevation
// factor then uses that derived height.
//
// On the heights route the zenith angle is not needed for the distance,
// but it is checked: it must lie strictly between 0 and the half circle on
// either route, and the reflector's height it implies is compared with the
// known one (CheckTargetHeight), with the geoid's rise N_B − N_A along the
// line where both marks' N are known on DatumEllipsoid.
//
// The residuals compare with the control on the ellipsoid; on
// DatumSeaLevel they show the legacy reduction's departure from it.
func Reduce(obs Observation, job Job, line Line, markA, markB MarkHeight) (Reduction, error) {
	var r Reduction
	if err := ReduceTo(&r, &obs, &job, &line, &markA, &markB); err != nil {
		return Reduction{}, err
	}
	return r, nil
}

// ReduceTo is Reduce writing into r, for callers that reduce millions of
// observations: it copies no arguments and no result. On an error r is
// left partly written.
func ReduceTo(r *Reduction, obs *Observation, job *Job, line *Line, markA, markB *MarkHeight) error {
	var err error
	if r.Instrument, err = InstrumentCorrection(obs.SlopeDistance, job.Instrument, obs.PrismConstant, obs.field(job)); err != nil {
		return err
	}
	if r.FirstVelocity, err = FirstVelocityCorrection(r.Instrument.Distance, job.Carrier, obs.Meteorology, job.DefaultAtmosphere); err != nil {
		return err
	}
	if r.SecondVelocity, err = SecondVelocityCorrection(r.FirstVelocity.Distance, job.K, line.Radius); err != nil {
		return err
	}
	if r.Heights, err = NewLineHeights(*markA, *markB, obs.InstrumentHeight, obs.TargetHeight); err != nil {
		return err
	}
	s3 := r.SecondVelocity.Distance
	if markB.Known() {
		r.Geometry, err = EllipsoidDistance(s3, r.Heights.HeightA, r.Heights.HeightB, Section{Radius: line.Radius, CurvatureRate: line.CurvatureRate})
	} else {
		r.Geometry, err = EllipsoidDistanceFromZenith(s3, obs.Zenith, r.Heights.HeightA, job.K, line.Radius)
		r.Heights.HeightB = r.Geometry.HeightB
		r.Heights.MeanMarkHeight = (markA.Height + r.Geometry.HeightB - obs.TargetHeight) / 2
	}
	if err != nil {
		return err
	}
	if r.Grid, err = GridDistance(r.Geometry.Arc, line.Scale, r.Heights.MeanMarkHeight, line.Radius); err != nil {
		return err
	}
	if r.Uncertainty, err = DistanceUncertainty(job.Budget, r.Geometry); err != nil {
		return err
	}
	if r.Geometry.Route == RouteHeights {
		// the geometry, k, the budget and σ_S were checked by the stages
		// above: only the zenith angle is left to check
		if err := needZenith("height check", obs.Zenith); err != nil {
			return err
		}
		c := HeightCheck{Zenith: obs.Zenith, K: job.K, GeoidRise: geoidRise(&r.Heights), SigmaSlope: r.Uncertainty.Instrument}
		if r.HeightCheck, err = checkTargetHeight(&r.Geometry, &c, &job.Budget, &job.Test); err != nil {
			return err
		}
	} else {
		r.HeightCheck = HeightCheckResult{}
	}
	if r.EllipsoidResidual, err = CompareDistance(r.Geometry.Arc, line.Inverse.Distance, r.Uncertainty.Total, job.Test); err != nil {
		return err
	}
	if r.GridResidual, err = CompareDistance(r.Grid.GridDistance, line.GridDistance, r.Uncertainty.Total*r.Grid.LineScale, job.Test); err != nil {
		return err
	}
	return nil
}

// geoidRise is N_B − N_A on DatumEllipsoid where both marks' N are known,
// else 0: on DatumSeaLevel the heights are already on the geoid.
func geoidRise(h *LineHeights) float64 {
	if h.Datum != DatumEllipsoid || h.MarkA.Separation.Source == SeparationNone || h.MarkB.Separation.Source == SeparationNone {
		return 0
	}
	return h.MarkB.Separation.N - h.MarkA.Separation.N
}
