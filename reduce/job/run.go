package job

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"sync"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/input"
)

// Plan is everything a run needs that is fixed for the job: it is built
// once and shared, read-only, by all workers.
type Plan struct {
	Settings *input.Settings
	CRS      *geodesic.CRS
	Geodesic *geodesic.Geodesic
	Workers  int // 0: all cores
	// Format, if set, turns each result into its output row in the
	// workers, so that formatting runs in parallel; the sink finds the
	// row in Result.Row.
	Format func(dst []byte, r *Result) []byte

	profiles map[string]planProfile // Settings.Profiles, not copied per row
	pts      *planPoints
	// lines holds each line the plan's runs have met, computed once:
	// it depends only on the plan.
	lines *lineCache
}

// PointID is the id of the plan's point number i (Result.Points).
func (p *Plan) PointID(i int32) string { return p.pts.id(i) }

// Points is the number of the plan's points.
func (p *Plan) Points() int { return int(p.pts.n) }

// EndRuns tells the plan that no more runs will use it. It frees what
// only finding a line from its end points needs (each point's list of its
// lines: about 11 bytes a line) and what only the chain reads of a line
// (24 bytes a line), and keeps what PointID, Mark and MarkHeight read, and
// of KnownLine's lines their ends, distances and radius (the rest is
// zero). Run on an ended plan is an error.
func (p *Plan) EndRuns() { p.lines.endFinding() }

// Mark is the height of the point id's mark on the job's reduction
// datum; false when the point is not in the plan or has no usable height.
func (p *Plan) Mark(id string) (reduce.MarkHeight, bool) {
	i, ok := p.pts.find(id)
	if !ok {
		return reduce.MarkHeight{}, false
	}
	pt := p.pts.at(i)
	return p.pts.mark(pt), pt.hasMark
}

// MarkHeight is the height of point number i's mark on the job's
// reduction datum, as the chain takes it (reduce.LineHeights.MarkA and
// MarkB); 0 for a point without one.
func (p *Plan) MarkHeight(i int32) float64 { return p.pts.mark(p.pts.at(i)).Height }

// KnownLine is the line numbered id (Result.LineID) from point number a to
// point number b, as a run of the plan computed it and Result.Line has
// it (after EndRuns, only its ends, Inverse.Distance, GridDistance and
// Radius); ok is false if no run has computed it, or it could not be.
func (p *Plan) KnownLine(id, a, b int32) (l reduce.Line, ok bool) {
	if id < 0 || id >= p.lines.next.Load() {
		return reduce.Line{}, false
	}
	l, err := p.lines.line(id, a, b, p)
	return l, err == nil
}

// planProfile is an instrument profile and its name, the plan's string.
type planProfile struct {
	name string
	*input.Profile
}

// NewPlan completes a plan: the marks' heights on the job's datum. The
// plan keeps of control what a run needs, and not the map.
func NewPlan(j *input.Settings, crs *geodesic.CRS, g *geodesic.Geodesic, control map[string]Control) (*Plan, error) {
	p := newPlan(j, crs, g, len(control))
	ids := make([]string, 0, len(control))
	for id := range control {
		ids = append(ids, id)
	}
	slices.SortFunc(ids, func(a, b string) int { return control[a].Line - control[b].Line })
	for _, id := range ids {
		if err := p.addControl(id, control[id]); err != nil {
			return nil, err
		}
	}
	p.complete()
	return p, nil
}

func newPlan(j *input.Settings, crs *geodesic.CRS, g *geodesic.Geodesic, points int) *Plan {
	return &Plan{Settings: j, CRS: crs, Geodesic: g, pts: newPlanPoints(j.Datum, points)}
}

// addControl keeps what a run needs of control point id, c, numbered
// next; the error says why its mark has no height on the job's datum.
func (p *Plan) addControl(id string, c Control) error {
	m, ok, err := markHeight(c, p.Settings.Datum)
	p.pts.add(id, planPoint{hasMark: ok, orthometric: m.Orthometric, ellipsoidal: m.Ellipsoidal,
		separation: m.Separation.N, sepSource: uint8(m.Separation.Source),
		ll: c.LatLng, grid: c.Grid, scale: c.Scale, hasScale: c.HasScale, line: int32(c.Line)})
	if err != nil {
		return fmt.Errorf("point %q (line %d): %w", input.Clip(id), c.Line, err)
	}
	return nil
}

// complete ends adding points: the plan is ready to run, with the job's
// settings as they are now (the job's critical value may have changed in
// its profiles while the points were read: io/jobconfig's Job.SetTests).
func (p *Plan) complete() {
	p.pts.done()
	p.lines = newLineCache(int(p.pts.n))
	p.Workers = p.Settings.Workers
	p.profiles = make(map[string]planProfile, len(p.Settings.Profiles))
	for name, prof := range p.Settings.Profiles {
		p.profiles[name] = planProfile{name, &prof}
	}
}

// A PlanBuilder makes a plan from the points file's rows as they are read
// (io/obsfile's EachPoint with Add): each point resolved as ResolveControl
// does, with its errors, and of it kept only what a run needs, never the
// file's points nor a map of them.
type PlanBuilder struct {
	plan       *Plan
	file       string
	proj       *geodesic.Projector
	seps       Separations
	resolveErr error // the first point that could not be resolved
	markErr    error // the first point whose mark has no height on the datum
}

// NewPlanBuilder prepares to plan a job whose points come from file,
// resolved with p and seps (ResolveControl). The plan takes the job's
// datum now, and its other settings when Plan makes it.
func NewPlanBuilder(j *input.Settings, crs *geodesic.CRS, g *geodesic.Geodesic, file string, p *geodesic.Projector, seps Separations) *PlanBuilder {
	return &PlanBuilder{plan: newPlan(j, crs, g, 0), file: file, proj: p, seps: seps}
}

// Add takes the next point of the file (io/obsfile's EachPoint's add): it
// returns the line of an earlier point with the same id, or else 0.
func (b *PlanBuilder) Add(pt input.Point) int {
	if i, dup := b.plan.pts.find(pt.ID); dup {
		return int(b.plan.pts.at(i).line)
	}
	var c Control
	if b.resolveErr == nil {
		var err error
		if c, err = resolve(pt, b.proj, b.seps); err != nil {
			b.resolveErr = fmt.Errorf("%s:%d: point %q: %w", b.file, pt.Line, input.Clip(pt.ID), err)
		}
	}
	c.Line = pt.Line
	if err := b.plan.addControl(pt.ID, c); err != nil && b.markErr == nil {
		b.markErr = err
	}
	return 0
}

// Resolved is the error of the first point that could not be resolved
// (as ResolveControl says it), once the file is read.
func (b *PlanBuilder) Resolved() error { return b.resolveErr }

// Plan is the plan of the points added, or the error of the first point
// that could not be resolved, or else of the first whose mark has no
// height on the job's datum (as NewPlan says it).
func (b *PlanBuilder) Plan() (*Plan, error) {
	if b.resolveErr != nil {
		return nil, b.resolveErr
	}
	if b.markErr != nil {
		return nil, b.markErr
	}
	b.plan.complete()
	return b.plan, nil
}

func markHeight(c Control, datum reduce.Datum) (reduce.MarkHeight, bool, error) {
	sep := reduce.Separation{N: c.Separation, Source: c.SeparationSource}
	switch {
	case datum == reduce.DatumSeaLevel && c.HasOrthometric:
		m, err := reduce.HeightFromOrthometric(datum, c.Orthometric, sep)
		return m, err == nil, err
	case datum == reduce.DatumEllipsoid && c.HasHeight():
		m, err := reduce.HeightFromEllipsoidal(datum, c.Ellipsoidal, sep)
		return m, err == nil, err
	}
	return reduce.MarkHeight{}, false, nil
}

// A Result is one observation's outcome: a reduction, or the reason it
// was rejected. Seq is its 0-based position among all rows read.
type Result struct {
	Seq     int64
	Obs     input.Observation
	Profile string
	// Line is the line's control data, from Obs.From to Obs.To, as the
	// chain uses it: its Midpoint, Azimuth and Inverse azimuths are not
	// kept per line and are zero. LineID numbers the line within the job,
	// whichever way it was observed (0, 1, 2, … in no particular order).
	Line   reduce.Line
	LineID int32
	// Points are the plan's numbers of Obs.From and Obs.To (Plan.PointID).
	Points    [2]int32
	Reduction reduce.Reduction
	// PrismFrom and FieldPrismFrom say where the target's prism constant
	// (Reduction.Instrument.PrismConstant) and the one the instrument
	// applied (Reduction.Instrument.FieldPrismConstant) came from.
	PrismFrom, FieldPrismFrom input.PrismOrigin
	// FieldPPMFrom says where the ppm the instrument applied
	// (Reduction.Instrument.FieldPPM) came from: the row's field_ppm
	// (PrismFromRow) or the profile's (PrismFromProfile).
	FieldPPMFrom input.PrismOrigin
	// Rejected rows: File and LineNo say where, Raw is the row as written
	// and Reason why it could not be reduced.
	Rejected bool
	File     string
	LineNo   int
	Raw      string
	Reason   string
	// Row is Plan.Format's output for this result. It, Obs.Fields and
	// the strings that Obs takes from the row (ObsID, Instrument, and
	// From and To of a rejected row) are reused after the sink returns:
	// keep copies.
	Row []byte
}

// A Sink receives every result in input order, from one goroutine.
type Sink func(*Result) error

// PoisonRecycledChunks, for tests, overwrites each chunk of an
// observation file once its results have reached the sink: the strings
// of a row share its chunk's memory (ChunkSource.Rows), and a
// string kept past the sink would then show as tildes.
var PoisonRecycledChunks bool

// chunkBytes is the size of the chunks of rows the reader hands to the
// workers, which parse them: about 250 rows of a 12-column file.
const chunkBytes = 16 << 10

// A batch is one chunk of an observation file, parsed, reduced and
// formatted by one worker; its buffers are reused.
type batch struct {
	seq     int64 // batch number
	src     ChunkSource
	data    []byte // the chunk's rows as read
	first   int    // line of the file where data starts
	results []Result
	errs    []error  // per row: read error (a RowError) or nil
	rows    [][]byte // formatted rows
	fields  []string // the rows' fields (Observation.Fields)
	// fatal ends the run after the batch's results: broken CSV quoting or
	// an unreadable file.
	fatal error
}

// Run reduces the observation sources in order, spreading the work over
// the plan's workers, and hands every result to sink in input order: the
// outputs do not depend on the number of workers. Observations are
// streamed: one goroutine reads the files in chunks of whole rows, which
// the workers parse, reduce and format, and only the chunks in flight are
// held. Warnings from the files' headers go to warn, called from the
// reading goroutine while the run goes on. An error that stops the run (a
// header without a required column, an unreadable file, broken CSV
// quoting, the sink's error) is returned, after the results of the rows
// before it have reached the sink (for a file that cannot be read on, the
// rows of the chunks before the one that failed).
func Run(ctx context.Context, plan *Plan, sources []Source, open Opener, warn func(input.Warning), sink Sink) error {
	if plan.lines.ended {
		return errors.New("the plan's runs have ended (Plan.EndRuns)")
	}
	workers := plan.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	ctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)

	// A fixed pool of batches bounds the memory in flight: one being
	// read, one per worker, and the rest queued or waiting for their turn
	// at the sink.
	pool := 2*workers + 2
	todo := make(chan *batch, pool)
	done := make(chan *batch, pool)
	free := make(chan *batch, pool)
	for range pool {
		free <- &batch{}
	}

	var readErr error
	go func() { // reader
		defer close(todo)
		readErr = readAll(ctx, sources, open, warn, todo, free)
		if readErr != nil {
			cancel(readErr)
		}
	}()

	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			p, err := plan.CRS.NewProjector()
			if err != nil {
				cancel(err)
				for range todo { // drain so the reader can finish
				}
				return
			}
			defer p.Close()
			for b := range todo {
				b.parse()
				for i := range b.results {
					r := &b.results[i]
					reduceOne(plan, p, r, b.errs[i])
					if plan.Format != nil {
						if i == len(b.rows) {
							b.rows = append(b.rows, nil)
						}
						b.rows[i] = plan.Format(b.rows[i][:0], r)
						r.Row = b.rows[i]
					}
				}
				select {
				case done <- b:
				case <-ctx.Done():
				}
			}
		})
	}
	go func() { wg.Wait(); close(done) }()

	// Collector: put the batches back in order and feed the sink, until a
	// batch ends the run.
	pending := map[int64]*batch{}
	var next, seq int64
	var stopErr error
	for b := range done {
		pending[b.seq] = b
		for {
			nb, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			next++
			for i := range nb.results {
				if stopErr != nil || ctx.Err() != nil {
					break
				}
				nb.results[i].Seq = seq
				seq++
				if err := sink(&nb.results[i]); err != nil {
					stopErr = err
					cancel(err)
				}
			}
			if nb.fatal != nil && stopErr == nil && ctx.Err() == nil {
				stopErr = nb.fatal
				cancel(nb.fatal)
			}
			if PoisonRecycledChunks {
				for i := range nb.data {
					nb.data[i] = '~'
				}
			}
			free <- nb // never blocks: the pool fits
		}
	}
	if stopErr != nil {
		return stopErr
	}
	if err := context.Cause(ctx); err != nil && !errors.Is(err, context.Canceled) {
		return err
	}
	if readErr != nil {
		return readErr
	}
	return ctx.Err()
}

// readAll reads every source into numbered chunks of rows. An error in
// reading a source's rows travels with its chunk, in order; an error in
// its header stops here.
func readAll(ctx context.Context, sources []Source, open Opener, warn func(input.Warning), todo chan<- *batch, free chan *batch) error {
	var seq int64
	for _, src := range sources {
		c, warnings, err := open(src)
		for _, w := range warnings {
			warn(w)
		}
		if err != nil {
			return err
		}
		for {
			var b *batch
			select {
			case b = <-free:
			case <-ctx.Done():
				return context.Cause(ctx)
			}
			data, first, err := c.Next(b.data, chunkBytes)
			if errors.Is(err, io.EOF) {
				b.data = data
				free <- b // never blocks: it came from the pool
				break
			}
			b.seq, b.src, b.data, b.first, b.fatal = seq, c, data, first, err
			seq++
			select {
			case todo <- b:
			case <-ctx.Done():
				return context.Cause(ctx)
			}
			if err != nil {
				return nil // the collector stops at this batch
			}
		}
	}
	return nil
}

// parse reads the batch's rows; an error that ends the file is kept for
// after them.
func (b *batch) parse() {
	b.results, b.errs, b.fields = b.results[:0], b.errs[:0], b.fields[:0]
	if b.fatal != nil {
		return
	}
	r := b.src.Rows(b.data, b.first)
	for {
		obs, fields, err := r.NextAppend(b.fields)
		b.fields = fields
		if errors.Is(err, io.EOF) {
			return
		}
		if err != nil && !isRowError(err) {
			b.fatal = err
			return
		}
		b.results = append(b.results, Result{Obs: obs})
		b.errs = append(b.errs, err)
	}
}

// isRowError reports whether err is a bad row (a RowError), which is
// rejected, rather than an error that ends the file.
func isRowError(err error) bool {
	var re RowError
	return errors.As(err, &re)
}

// reduceOne reduces one observation in place, or marks it rejected.
func reduceOne(plan *Plan, p *geodesic.Projector, r *Result, readErr error) {
	reject := func(reason string) {
		r.Rejected, r.Reason = true, reason
		if r.File == "" {
			r.File, r.LineNo, r.Raw = r.Obs.File, r.Obs.Line, r.Obs.Raw()
		}
	}
	if readErr != nil {
		var re RowError
		errors.As(readErr, &re)
		r.File, r.LineNo, r.Raw = re.RejectedRow()
		reject(re.Error())
		return
	}
	o := &r.Obs
	where := fileLine{o.File, o.Line}
	name := o.Instrument
	if name == "" {
		name = plan.Settings.DefaultInstrument
	}
	prof, ok := plan.profiles[name]
	if !ok {
		if name == "" {
			reject(where.String() + ": no instrument column and no default_instrument in the job")
		} else {
			reject(fmt.Sprintf("%s: instrument %q has no [instrument.%s] profile in the job", where.col(o.Columns, colInstrument), input.Clip(name), input.Clip(name)))
		}
		return
	}
	r.Profile = prof.name // the plan's string: the row's may go
	ia, okA := plan.pts.find(o.From)
	ib, okB := plan.pts.find(o.To)
	switch {
	case !okA:
		reject(fmt.Sprintf("%s: station %q is not in the points file", where.col(o.Columns, colFrom), input.Clip(o.From)))
		return
	case !okB:
		reject(fmt.Sprintf("%s: target %q is not in the points file", where.col(o.Columns, colTo), input.Clip(o.To)))
		return
	}
	a, b := plan.pts.at(ia), plan.pts.at(ib)
	o.From, o.To = plan.pts.id(ia), plan.pts.id(ib) // the plan's strings: the row's may go
	r.Points = [2]int32{ia, ib}
	if !a.hasMark {
		reject(fmt.Sprintf("%s: station %q has no height on the reduction datum (%s)", where.col(o.Columns, colFrom), input.Clip(o.From), plan.Settings.Datum))
		return
	}
	markA, markB := plan.pts.mark(a), plan.pts.mark(b) // markB zero: the target's height comes from the zenith angle
	var err error
	if r.Line, r.LineID, err = plan.lines.get(ia, ib, plan, p); err != nil {
		reject(fmt.Sprintf("%s: line %s → %s: %v", where, o.From, o.To, err))
		return
	}
	pr, conflict := prof.Prisms(o.PrismConstant, o.HasPrismConstant, o.FieldPrismConstant, o.HasFieldPrismConstant)
	if conflict != input.PrismsKnown {
		reject(prismConflict(where, plan.Settings.LengthUnit, prof, o, pr, conflict))
		return
	}
	r.PrismFrom, r.FieldPrismFrom = pr.TargetFrom, pr.AppliedFrom
	if o.Horizontal && prof.Chain.Field.Curvature.Mode != reduce.FieldCurvatureNone {
		if err = undoFieldCurvature(o, &prof.Chain.Field.Curvature); err != nil {
			reject(fmt.Sprintf("%s: %v", where, err))
			return
		}
	}
	obs := reduce.Observation{
		SlopeDistance:         o.SlopeDistance,
		Zenith:                o.Zenith,
		InstrumentHeight:      o.InstrumentHeight,
		TargetHeight:          o.TargetHeight,
		PrismConstant:         pr.Target,
		FieldPrismConstant:    pr.Applied,
		HasFieldPrismConstant: true,
		FieldPPM:              o.FieldPPM,
		HasFieldPPM:           o.HasFieldPPM,
		Meteorology:           Meteorology(o.AtInstrument, o.AtTarget),
	}
	r.FieldPPMFrom = input.PrismFromProfile
	if o.HasFieldPPM {
		r.FieldPPMFrom = input.PrismFromRow
	}
	if !o.AtInstrument.Has && !o.AtTarget.Has && !plan.Settings.HasDefaultAtmosphere {
		reject(where.String() + ": the row records no temperature, pressure and humidity, and the job has no default_atmosphere")
		return
	}
	if err = reduce.ReduceTo(&r.Reduction, &obs, &prof.Chain, &r.Line, &markA, &markB); err != nil {
		r.Reduction = reduce.Reduction{}
		reject(fmt.Sprintf("%s: %v", where, err))
	}
}

// undoFieldCurvature replaces a horizontal row's slope distance and zenith
// angle with those whose horizontal and vertical distances the instrument
// would have stored with its curvature and refraction correction c: the
// reader turned the stored hd', vd' into S = √(hd'² + vd'²) and
// z = atan2(hd', vd'), so hd' = S sin z and vd' = S cos z come back from
// them, and c.Inverse undoes the instrument's correction, so that the
// chain's own curvature and refraction apply once.
func undoFieldCurvature(o *input.Observation, c *reduce.FieldCurvature) error {
	sin, cos := math.Sincos(float64(o.Zenith))
	s, z, err := c.Inverse(o.SlopeDistance*sin, o.SlopeDistance*cos)
	if err != nil {
		return err
	}
	o.SlopeDistance, o.Zenith = s, z
	return nil
}

// fileLine formats as "file:line" only when a message needs it.
type fileLine struct {
	file string
	line int
}

func (f fileLine) String() string { return fmt.Sprintf("%s:%d", f.file, f.line) }

// The columns a message may name.
const (
	colFrom = iota
	colTo
	colInstrument
)

// col is "file:line:column" for the row's column which (colFrom, …), or
// "file:line" where the file's columns are not known or it has none.
func (f fileLine) col(c input.Columns, which int) string {
	n := [...]int32{c.From, c.To, c.Instrument}[which]
	if n <= 0 {
		return f.String()
	}
	return fmt.Sprintf("%s:%d:%d", f.file, f.line, n)
}

// Meteorology is what a row recorded of the air at each end, for the chain.
func Meteorology(atInstrument, atTarget input.Weather) reduce.Meteorology {
	air := func(w input.Weather) reduce.Atmosphere {
		return reduce.Atmosphere{TemperatureC: w.TemperatureC, PressureHPa: w.PressureHPa, HumidityPct: w.HumidityPct}
	}
	return reduce.Meteorology{Instrument: air(atInstrument), HaveInstrument: atInstrument.Has, Target: air(atTarget), HaveTarget: atTarget.Has}
}
