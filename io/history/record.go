package history

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/stdlib"
)

// A Run is one nightly run as the history records it.
type Run struct {
	ID      int64
	Job     string
	Night   string // YYYY-MM-DD, the night the run's files are dated by
	Started time.Time
	Host    string
	PID     int
	Version string
}

// BeginRun records a run and sets r.ID.
func (s *Store) BeginRun(ctx context.Context, r *Run) error {
	if r.Host == "" {
		r.Host, _ = os.Hostname()
	}
	if r.PID == 0 {
		r.PID = os.Getpid()
	}
	return s.db.QueryRowContext(ctx, s.d.sql(`INSERT INTO runs (job, night, started, host, pid, version) VALUES (?, ?, ?, ?, ?, ?) RETURNING id`),
		r.Job, r.Night, r.Started.UTC().Format(time.RFC3339), r.Host, r.PID, r.Version).Scan(&r.ID)
}

// File statuses.
const (
	StatusReduced  = "reduced"  // its rows are in the history
	StatusRejected = "rejected" // it could not be reduced: Reason says why
)

// A File is an input file as processed: its processed mark.
type File struct {
	ID        int64
	Job       string
	SHA256    string // of the content: the file's identity
	Name      string // the name it arrived under
	Night     string
	RunID     int64
	Status    string // StatusReduced or StatusRejected
	Reason    string // why it was rejected
	Results   string // the results folder
	InputHash string // the reduce run's input hash (inputs and settings)
	Settings  string // the reduce run's settings, JSON
	Read      int
	Reduced   int
	Rejected  int
	Exit      int // the reduce run's exit status
}

// An Observation is one reduced observation. Lengths in metres, residuals
// and σ in millimetres.
type Observation struct {
	LineNo                 int // line of the input file
	ObsID                  string
	From, To               string
	Instrument             string
	Slope, Arc, Geodesic   float64 // m
	ResidualMM, SigmaMM, W float64
	Flagged                bool
}

// A Line is the mean of one night's observations of a line by one
// instrument, either direction (From, To as first observed).
type Line struct {
	Instrument          string
	From, To            string
	N                   int
	Geodesic            float64 // m
	ResidualMM, SigmaMM float64 // of the mean
	Flagged             int     // observations flagged
}

// A Fit is one night's fit of residual = constant + scale · distance
// over one instrument's lines (the fit of reduce).
type Fit struct {
	Instrument                  string
	N                           int
	ConstantMM, ConstantSigmaMM float64
	ScalePPM, ScaleSigmaPPM     float64
	Evidence                    string
}

// Processed returns the processed mark of the file of content hash sha in
// job, if there is one.
func (s *Store) Processed(ctx context.Context, job, sha string) (File, bool, error) {
	var f File
	err := s.db.QueryRowContext(ctx, s.d.sql(`SELECT id, job, sha256, name, night, run_id, status, reason, results, input_hash, settings,
		rows_read, rows_reduced, rows_rejected, exit_status FROM files WHERE job = ? AND sha256 = ?`), job, sha).Scan(
		&f.ID, &f.Job, &f.SHA256, &f.Name, &f.Night, &f.RunID, &f.Status, &f.Reason, &f.Results, &f.InputHash, &f.Settings,
		&f.Read, &f.Reduced, &f.Rejected, &f.Exit)
	if err == sql.ErrNoRows {
		return File{}, false, nil
	}
	if err != nil {
		return File{}, false, err
	}
	return f, true, nil
}

// Record writes a file's processed mark and its rows in one transaction.
// If the job already holds a mark for the file's hash (another run, on
// this server or another, committed it first) nothing is written and
// Record returns false with the mark that is there. It is BeginRecord,
// the observations a batch at a time, and Finish.
func (s *Store) Record(ctx context.Context, f *File, obs []Observation, lines []Line, fits []Fit) (bool, error) {
	r, err := s.BeginRecord(ctx, f)
	if err != nil {
		return false, err
	}
	defer r.Abort()
	for i := 0; i < len(obs); i += RecordBatch {
		if err := r.write(ctx, obs[i:min(i+RecordBatch, len(obs))]); err != nil {
			return false, err
		}
	}
	return r.Finish(ctx, lines, fits)
}

// RecordBatch is how many observations a Recording holds before it
// writes them to the store.
const RecordBatch = 10000

// A Recording is one file's record in progress: its processed mark and
// its rows in one transaction, the observations written a batch at a
// time as they come (Add), so that a file of any size is held in memory
// a batch at a time. On PostgreSQL the rows go in by COPY (pgx's
// CopyFrom, the binary protocol, several times cheaper than INSERTs), in
// a pgx transaction on a connection of the pool held for the recording;
// on SQLite by multi-row INSERTs.
type Recording struct {
	s   *Store
	f   *File
	won bool // the mark is the recording's: no other run's was there
	buf []Observation

	tx  *sql.Tx   // SQLite
	ins *inserter // SQLite's observations

	conn *sql.Conn // PostgreSQL
	ptx  pgx.Tx
}

// BeginRecord begins the record of f: its processed mark, in a
// transaction that Finish commits with the rows and Abort rolls back. If
// the job already holds a mark for f's hash, the rows given are dropped
// and Finish returns false with the mark that is there. f may be changed
// (its status, counts, reason) up to Finish, which records it as it is
// then.
func (s *Store) BeginRecord(ctx context.Context, f *File) (*Recording, error) {
	r := &Recording{s: s, f: f}
	var err error
	if s.d.name == "postgres" {
		err = r.beginCopy(ctx)
	} else {
		err = r.beginInsert(ctx)
	}
	if err != nil {
		r.Abort()
		return nil, err
	}
	if !r.won {
		r.Abort()
	}
	return r, nil
}

func (r *Recording) beginInsert(ctx context.Context) error {
	tx, err := r.s.db.BeginTx(ctx, nil)
	if err != nil {
		return err
	}
	r.tx = tx
	err = tx.QueryRowContext(ctx, r.s.d.sql(markSQL), markArgs(r.f)...).Scan(&r.f.ID)
	if err == sql.ErrNoRows {
		return nil
	}
	if err != nil {
		return fmt.Errorf("recording %s: %w", r.f.Name, err)
	}
	if _, err := tx.ExecContext(ctx, r.s.d.sql(reopenSQL), r.f.Job, r.f.Night); err != nil {
		return fmt.Errorf("recording %s: %w", r.f.Name, err)
	}
	r.won = true
	r.ins = newInserter(tx, r.s.d, "observations", obsCols)
	return nil
}

func (r *Recording) beginCopy(ctx context.Context) error {
	conn, err := r.s.db.Conn(ctx)
	if err != nil {
		return err
	}
	r.conn = conn
	var pc *pgx.Conn
	if err := conn.Raw(func(dc any) error { pc = dc.(*stdlib.Conn).Conn(); return nil }); err != nil {
		return err
	}
	// The sql.Conn is the recording's until Abort or Finish: no other
	// user of the pool gets its pgx connection meanwhile.
	if r.ptx, err = pc.Begin(ctx); err != nil {
		return err
	}
	err = r.ptx.QueryRow(ctx, r.s.d.sql(markSQL), markArgs(r.f)...).Scan(&r.f.ID)
	if errors.Is(err, pgx.ErrNoRows) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("recording %s: %w", r.f.Name, err)
	}
	if _, err := r.ptx.Exec(ctx, r.s.d.sql(reopenSQL), r.f.Job, r.f.Night); err != nil {
		return fmt.Errorf("recording %s: %w", r.f.Name, err)
	}
	r.won = true
	return nil
}

// Add adds an observation to the record.
func (r *Recording) Add(ctx context.Context, o *Observation) error {
	if !r.won {
		return nil
	}
	r.buf = append(r.buf, *o)
	if len(r.buf) < RecordBatch {
		return nil
	}
	err := r.write(ctx, r.buf)
	r.buf = r.buf[:0]
	return err
}

// write writes observations in the recording's transaction.
func (r *Recording) write(ctx context.Context, obs []Observation) error {
	if !r.won || len(obs) == 0 {
		return nil
	}
	id := r.f.ID
	row := func(i int, a []any) []any { return obsRow(id, &obs[i], a) }
	if r.tx != nil {
		return r.ins.insert(ctx, len(obs), row)
	}
	return copyRows(ctx, r.ptx, "observations", obsCols, len(obs), row)
}

// Finish writes the rest of the observations, the lines and the fits,
// the mark as the File is now, and commits. It returns false, with the
// mark that is there in the File, if another run had recorded the file.
func (r *Recording) Finish(ctx context.Context, lines []Line, fits []Fit) (bool, error) {
	if !r.won {
		there, ok, err := r.s.Processed(ctx, r.f.Job, r.f.SHA256)
		if err == nil && ok {
			*r.f = there
		}
		return false, err
	}
	defer r.Abort()
	if err := r.write(ctx, r.buf); err != nil {
		return false, err
	}
	r.buf = nil
	f := r.f
	id := f.ID
	args := append(markArgs(f)[2:], id) // all but job and sha256, then the id
	if r.tx != nil {
		if _, err := r.tx.ExecContext(ctx, r.s.d.sql(updateMarkSQL), args...); err != nil {
			return false, fmt.Errorf("recording %s: %w", f.Name, err)
		}
		if err := insertRows(ctx, r.tx, r.s.d, "lines", lineCols, len(lines),
			func(i int, a []any) []any { return lineRow(id, &lines[i], a) }); err != nil {
			return false, err
		}
		if err := insertRows(ctx, r.tx, r.s.d, "instrument_fits", fitCols, len(fits),
			func(i int, a []any) []any { return fitRow(id, &fits[i], a) }); err != nil {
			return false, err
		}
		if err := r.tx.Commit(); err != nil {
			return false, fmt.Errorf("recording %s: %w", f.Name, err)
		}
		return true, nil
	}
	if _, err := r.ptx.Exec(ctx, r.s.d.sql(updateMarkSQL), args...); err != nil {
		return false, fmt.Errorf("recording %s: %w", f.Name, err)
	}
	if err := copyRows(ctx, r.ptx, "lines", lineCols, len(lines), func(i int, a []any) []any { return lineRow(id, &lines[i], a) }); err != nil {
		return false, err
	}
	if err := copyRows(ctx, r.ptx, "instrument_fits", fitCols, len(fits), func(i int, a []any) []any { return fitRow(id, &fits[i], a) }); err != nil {
		return false, err
	}
	if err := r.ptx.Commit(ctx); err != nil {
		return false, fmt.Errorf("recording %s: %w", f.Name, err)
	}
	return true, nil
}

// Abort rolls the recording back, unless Finish committed it; safe more
// than once.
func (r *Recording) Abort() {
	if r.ins != nil {
		r.ins.close()
		r.ins = nil
	}
	if r.tx != nil {
		r.tx.Rollback()
		r.tx = nil
	}
	if r.ptx != nil {
		r.ptx.Rollback(context.Background())
		r.ptx = nil
	}
	if r.conn != nil {
		r.conn.Close()
		r.conn = nil
	}
}

// copyRows COPYs n rows into table; row appends the values of row i.
func copyRows(ctx context.Context, tx pgx.Tx, table, cols string, n int, row func(i int, a []any) []any) error {
	if n == 0 {
		return nil
	}
	names := strings.Split(cols, ", ")
	buf := make([]any, 0, len(names))
	src := pgx.CopyFromSlice(n, func(i int) ([]any, error) { return row(i, buf[:0]), nil })
	if _, err := tx.CopyFrom(ctx, pgx.Identifier{table}, names, src); err != nil {
		return fmt.Errorf("history: %s: %w", table, err)
	}
	return nil
}

// markSQL inserts a file's processed mark unless the job holds one for
// its hash. ON CONFLICT DO NOTHING: a concurrent writer of the same mark
// waits for the first to commit (PostgreSQL) or for its write lock
// (SQLite), then finds the mark there and gets no row back.
const markSQL = `INSERT INTO files (job, sha256, name, night, run_id, status, reason, results, input_hash, settings,
	rows_read, rows_reduced, rows_rejected, exit_status) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
	ON CONFLICT (job, sha256) DO NOTHING RETURNING id`

// reopenSQL, in the transaction of a file's mark, makes its night's
// alerts due again: they were computed without the file.
const reopenSQL = `DELETE FROM alert_nights WHERE job = ? AND night = ?`

// updateMarkSQL sets a recorded mark as its File is at Finish.
const updateMarkSQL = `UPDATE files SET name = ?, night = ?, run_id = ?, status = ?, reason = ?, results = ?, input_hash = ?, settings = ?,
	rows_read = ?, rows_reduced = ?, rows_rejected = ?, exit_status = ? WHERE id = ?`

func markArgs(f *File) []any {
	return []any{f.Job, f.SHA256, f.Name, f.Night, f.RunID, f.Status, f.Reason, f.Results, f.InputHash, f.Settings,
		f.Read, f.Reduced, f.Rejected, f.Exit}
}

// The tables of a file's rows: their columns and one row's values. The
// marks and the instrument are text on every row: as integer ids (a
// table of names beside) 1,000,000 observations went into SQLite no
// faster, 3.6 s either way (median of 3 each, the names' lookup
// included), so the schema keeps them plain.
const (
	obsCols  = "file_id, line_no, obs_id, from_mark, to_mark, instrument, slope_m, arc_m, geodesic_m, residual_mm, sigma_mm, w, flagged"
	lineCols = "file_id, instrument, from_mark, to_mark, n, geodesic_m, residual_mm, sigma_mm, flagged"
	fitCols  = "file_id, instrument, n, constant_mm, constant_sigma_mm, scale_ppm, scale_sigma_ppm, evidence"
)

func obsRow(id int64, o *Observation, a []any) []any {
	return append(a, id, o.LineNo, o.ObsID, o.From, o.To, o.Instrument, o.Slope, o.Arc, o.Geodesic, o.ResidualMM, o.SigmaMM, o.W, b2i(o.Flagged))
}

func lineRow(id int64, l *Line, a []any) []any {
	return append(a, id, l.Instrument, l.From, l.To, l.N, l.Geodesic, l.ResidualMM, l.SigmaMM, l.Flagged)
}

func fitRow(id int64, x *Fit, a []any) []any {
	return append(a, id, x.Instrument, x.N, x.ConstantMM, x.ConstantSigmaMM, x.ScalePPM, x.ScaleSigmaPPM, x.Evidence)
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// maxParams bounds the placeholders of one INSERT: SQLite allows 32,766
// (since 3.32) and PostgreSQL 65,535.
const maxParams = 30000

// An inserter inserts rows into one table of a transaction, many to a
// statement, the statement of a full one prepared once.
type inserter struct {
	tx          *sql.Tx
	d           dialect
	table, cols string
	ncol, per   int
	full        *sql.Stmt
	args        []any
}

func newInserter(tx *sql.Tx, d dialect, table, cols string) *inserter {
	ncol := strings.Count(cols, ",") + 1
	return &inserter{tx: tx, d: d, table: table, cols: cols, ncol: ncol, per: min(maxParams/ncol, 1000)}
}

func (in *inserter) stmt(k int) string {
	tuple := "(" + strings.TrimSuffix(strings.Repeat("?, ", in.ncol), ", ") + ")"
	return in.d.sql("INSERT INTO " + in.table + " (" + in.cols + ") VALUES " + strings.TrimSuffix(strings.Repeat(tuple+", ", k), ", "))
}

// insert inserts n rows; row appends the values of row i.
func (in *inserter) insert(ctx context.Context, n int, row func(i int, a []any) []any) error {
	for i := 0; i < n; i += in.per {
		k := min(in.per, n-i)
		in.args = in.args[:0]
		for j := i; j < i+k; j++ {
			in.args = row(j, in.args)
		}
		var err error
		if k == in.per {
			if in.full == nil {
				if in.full, err = in.tx.PrepareContext(ctx, in.stmt(in.per)); err != nil {
					return fmt.Errorf("history: %s: %w", in.table, err)
				}
			}
			_, err = in.full.ExecContext(ctx, in.args...)
		} else {
			_, err = in.tx.ExecContext(ctx, in.stmt(k), in.args...)
		}
		if err != nil {
			return fmt.Errorf("history: %s: %w", in.table, err)
		}
	}
	return nil
}

// insertRows inserts n rows into table by an inserter of its own.
func insertRows(ctx context.Context, tx *sql.Tx, d dialect, table, cols string, n int, row func(i int, a []any) []any) error {
	in := newInserter(tx, d, table, cols)
	defer in.close()
	return in.insert(ctx, n, row)
}

func (in *inserter) close() {
	if in.full != nil {
		in.full.Close()
		in.full = nil
	}
}

// An Alert is a finding from the history: an instrument drifting, a mark
// moved. It is recorded once per job, night, kind and subject.
type Alert struct {
	Night   string `json:"night"`
	Kind    string `json:"kind"`    // "instrument-constant", "instrument-scale", "mark-moved"
	Subject string `json:"subject"` // the instrument's or the mark's name
	Message string `json:"message"`
}

// RecordAlerts records the alerts computed for a night of job by run, and
// that the night's alerts are computed, in one transaction. An alert
// already recorded (same night, kind and subject) is left as it is.
func (s *Store) RecordAlerts(ctx context.Context, job, night string, runID int64, alerts []Alert) error {
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return err
	}
	defer tx.Rollback()
	for _, a := range alerts {
		if a.Night != night {
			return fmt.Errorf("history: an alert of %s recorded as %s's", a.Night, night)
		}
		if _, err := tx.ExecContext(ctx, s.d.sql(`INSERT INTO alerts (job, night, kind, subject, message, run_id) VALUES (?, ?, ?, ?, ?, ?)
			ON CONFLICT (job, night, kind, subject) DO NOTHING`), job, a.Night, a.Kind, a.Subject, a.Message, runID); err != nil {
			return fmt.Errorf("history: alerts of %s: %w", night, err)
		}
	}
	if _, err := tx.ExecContext(ctx, s.d.sql(`INSERT INTO alert_nights (job, night, run_id) VALUES (?, ?, ?)
		ON CONFLICT (job, night) DO NOTHING`), job, night, runID); err != nil {
		return fmt.Errorf("history: alerts of %s: %w", night, err)
	}
	return tx.Commit()
}

// AlertsDue are the nights of job, in order, with files recorded and
// their alerts not computed since: a run that stopped after recording a
// night's files and before its alerts, or a file recorded for a night
// after its alerts.
func (s *Store) AlertsDue(ctx context.Context, job string) ([]string, error) {
	return queryAll(ctx, s, `SELECT DISTINCT f.night FROM files f WHERE f.job = ?
		AND NOT EXISTS (SELECT 1 FROM alert_nights a WHERE a.job = f.job AND a.night = f.night) ORDER BY f.night`, []any{job},
		func(rows *sql.Rows, n *string) error { return rows.Scan(n) })
}

// Alerts lists the alerts of a job, by night, kind and subject.
func (s *Store) Alerts(ctx context.Context, job string) ([]Alert, error) {
	return queryAll(ctx, s, `SELECT night, kind, subject, message FROM alerts WHERE job = ? ORDER BY night, kind, subject`, []any{job},
		func(rows *sql.Rows, a *Alert) error { return rows.Scan(&a.Night, &a.Kind, &a.Subject, &a.Message) })
}
