package reduce

// Datum says which reference surface distances are reduced to.
type Datum int

// Reference surfaces. The zero value is not a datum.
const (
	// DatumEllipsoid reduces to the ellipsoid with ellipsoidal heights
	// h = H + N: the rigorous reduction for grid coordinates of a modern
	// CRS.
	DatumEllipsoid Datum = iota + 1
	// DatumSeaLevel is the legacy reduction to the geoid ("sea level") with
	// orthometric heights H, as old grid distances were computed. It
	// differs from DatumEllipsoid by about s·N/R: 4.7 ppm for N = −30 m.
	DatumSeaLevel
)

func (d Datum) String() string {
	switch d {
	case DatumEllipsoid:
		return "ellipsoid"
	case DatumSeaLevel:
		return "sea level (legacy)"
	}
	return "unknown"
}

// SeparationSource says where a geoid separation N came from.
type SeparationSource int

// Sources of N. The zero value says no separation was given.
const (
	SeparationNone     SeparationSource = iota // not given (usable only where N is not needed)
	SeparationGrid                             // interpolated in a geoid grid
	SeparationPoint                            // given for the point
	SeparationConstant                         // one value for the whole job
)

func (s SeparationSource) String() string {
	switch s {
	case SeparationNone:
		return "none"
	case SeparationGrid:
		return "geoid grid"
	case SeparationPoint:
		return "per point"
	case SeparationConstant:
		return "job constant"
	}
	return "unknown"
}

// Separation is a geoid separation N (geoid above the ellipsoid, metres)
// and where it came from.
type Separation struct {
	N      float64
	Source SeparationSource
}

// MarkHeight keeps a mark's heights and the one used for the reduction.
// The zero value (Datum 0) is a mark whose height is unknown.
type MarkHeight struct {
	Datum       Datum
	Orthometric float64    // H, metres (NaN-free: 0 when not known and not needed)
	Ellipsoidal float64    // h = H + N, metres (0 when not known and not needed)
	Separation  Separation // N and its source
	Height      float64    // the height on Datum: Ellipsoidal or Orthometric
}

// Known reports whether the mark's height is known.
func (m MarkHeight) Known() bool { return m.Datum != 0 }

// HeightFromOrthometric returns a mark's heights from its orthometric
// height H (metres) and its geoid separation: h = H + N. On DatumSeaLevel N
// may be absent (SeparationNone) and then Ellipsoidal is left at H + 0 and
// marked so by the source.
func HeightFromOrthometric(datum Datum, orthometric float64, sep Separation) (MarkHeight, error) {
	if err := checkMarkInputs(datum, orthometric, sep); err != nil {
		return MarkHeight{}, err
	}
	m := MarkHeight{Datum: datum, Orthometric: orthometric, Separation: sep, Ellipsoidal: orthometric + sep.N}
	m.Height = m.pick()
	return m, nil
}

// HeightFromEllipsoidal returns a mark's heights from its ellipsoidal
// height h (metres): H = h − N. On DatumEllipsoid N may be absent.
func HeightFromEllipsoidal(datum Datum, ellipsoidal float64, sep Separation) (MarkHeight, error) {
	if err := checkMarkInputs(datum, ellipsoidal, sep); err != nil {
		return MarkHeight{}, err
	}
	m := MarkHeight{Datum: datum, Ellipsoidal: ellipsoidal, Separation: sep, Orthometric: ellipsoidal - sep.N}
	m.Height = m.pick()
	return m, nil
}

func (m MarkHeight) pick() float64 {
	if m.Datum == DatumSeaLevel {
		return m.Orthometric
	}
	return m.Ellipsoidal
}

func checkMarkInputs(datum Datum, height float64, sep Separation) error {
	const stage = "heights"
	if datum != DatumEllipsoid && datum != DatumSeaLevel {
		return &InputError{Stage: stage, Quantity: "datum", Got: float64(datum), Want: "ellipsoid or sea level"}
	}
	if err := needRange(stage, "mark height", height, "m", -1000, 10000); err != nil {
		return err
	}
	if err := needRange(stage, "geoid separation", sep.N, "m", -200, 200); err != nil {
		return err
	}
	if sep.Source < SeparationNone || sep.Source > SeparationConstant {
		return &InputError{Stage: stage, Quantity: "geoid separation source", Got: float64(sep.Source), Want: "grid, point, constant or none"}
	}
	return nil
}

// LineHeights keeps the heights of the two ends of one observed line on the
// reduction datum, metres.
type LineHeights struct {
	Datum            Datum
	MarkA, MarkB     MarkHeight
	InstrumentHeight float64 // HI, instrument axis above mark A
	TargetHeight     float64 // HT, reflector above mark B
	HeightA          float64 // instrument axis: MarkA.Height + HI
	HeightB          float64 // reflector: MarkB.Height + HT (0 when MarkB is unknown)
	MeanMarkHeight   float64 // (MarkA.Height + MarkB.Height)/2, for the elevation factor
}

// NewLineHeights combines the marks' heights with the instrument and
// target heights above them (metres). Mark B may be unknown (the zero
// MarkHeight): the zenith route then gives the reflector's height.
func NewLineHeights(a, b MarkHeight, instrumentHeight, targetHeight float64) (LineHeights, error) {
	const stage = "heights"
	if !a.Known() {
		return LineHeights{}, &InputError{Stage: stage, Quantity: "height of the instrument's mark", Got: 0, Unit: "m", Want: "a known height"}
	}
	if b.Known() && b.Datum != a.Datum {
		return LineHeights{}, &InputError{Stage: stage, Quantity: "datum of the target's mark", Got: float64(b.Datum), Want: "the datum of the instrument's mark, " + a.Datum.String()}
	}
	if err := needRange(stage, "instrument height", instrumentHeight, "m", -100, 100); err != nil {
		return LineHeights{}, err
	}
	if err := needRange(stage, "target height", targetHeight, "m", -100, 100); err != nil {
		return LineHeights{}, err
	}
	h := LineHeights{
		Datum:            a.Datum,
		MarkA:            a,
		MarkB:            b,
		InstrumentHeight: instrumentHeight,
		TargetHeight:     targetHeight,
		HeightA:          a.Height + instrumentHeight,
		MeanMarkHeight:   a.Height,
	}
	if b.Known() {
		h.HeightB = b.Height + targetHeight
		h.MeanMarkHeight = (a.Height + b.Height) / 2
	}
	return h, nil
}
