package input

import "github.com/geored/geored/reduce"

// Settings are what a run of reduce/job reads of a job: the reduction
// datum, the instrument profiles by name and which a row without an
// instrument takes, whether the job has a default atmosphere, the number
// of workers and the unit its messages write lengths in. io/jobconfig
// makes them from the job file (Job.Settings).
type Settings struct {
	Datum                reduce.Datum
	Profiles             map[string]Profile
	DefaultInstrument    string
	HasDefaultAtmosphere bool
	Workers              int // 0: all cores
	// LengthUnit writes lengths in messages (a reject's slope distances)
	// in the unit of the job's files.
	LengthUnit LengthUnit
}

// A LengthUnit writes a length given in metres in a unit of its own, for
// messages: FormatLength with so many decimals, and String its name.
type LengthUnit interface {
	FormatLength(m float64, decimals int) (string, error)
	String() string
}

// Profile is one instrument profile, ready for the chain.
type Profile struct {
	Name string
	// Chain holds everything of reduce.Job for this instrument.
	Chain reduce.Job
	// PrismConstant is the targets' prism constant where a row gives
	// none, metres.
	PrismConstant float64
	// RowPrism says what a row's prism_constant_mm is (Prisms).
	RowPrism RowPrismReading
}
