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
// Record returns false with the mark that is there. On PostgreSQL the
// rows go in by COPY (recordCopy).
func (s *Store) Record(ctx context.Context, f *File, obs []Observation, lines []Line, fits []Fit) (bool, error) {
	var won bool
	var err error
	if s.d.name == "postgres" {
		won, err = s.recordCopy(ctx, f, obs, lines, fits)
	} else {
		won, err = s.recordInsert(ctx, f, obs, lines, fits)
	}
	if err != nil || won {
		return won, err
	}
	there, ok, err := s.Processed(ctx, f.Job, f.SHA256)
	if err == nil && ok {
		*f = there
	}
	return false, err
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

func markArgs(f *File) []any {
	return []any{f.Job, f.SHA256, f.Name, f.Night, f.RunID, f.Status, f.Reason, f.Results, f.InputHash, f.Settings,
		f.Read, f.Reduced, f.Rejected, f.Exit}
}

// The tables of a file's rows: their columns and one row's values.
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

// recordInsert is Record by multi-row INSERTs in a database/sql
// transaction (SQLite).
func (s *Store) recordInsert(ctx context.Context, f *File, obs []Observation, lines []Line, fits []Fit) (bool, error) {
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return false, err
	}
	defer tx.Rollback()
	err = tx.QueryRowContext(ctx, s.d.sql(markSQL), markArgs(f)...).Scan(&f.ID)
	if err == sql.ErrNoRows {
		return false, nil
	}
	if err != nil {
		return false, fmt.Errorf("recording %s: %w", f.Name, err)
	}
	if _, err := tx.ExecContext(ctx, s.d.sql(reopenSQL), f.Job, f.Night); err != nil {
		return false, fmt.Errorf("recording %s: %w", f.Name, err)
	}
	if err := insertRows(ctx, tx, s.d, "observations", obsCols, len(obs),
		func(i int, a []any) []any { return obsRow(f.ID, &obs[i], a) }); err != nil {
		return false, err
	}
	if err := insertRows(ctx, tx, s.d, "lines", lineCols, len(lines),
		func(i int, a []any) []any { return lineRow(f.ID, &lines[i], a) }); err != nil {
		return false, err
	}
	if err := insertRows(ctx, tx, s.d, "instrument_fits", fitCols, len(fits),
		func(i int, a []any) []any { return fitRow(f.ID, &fits[i], a) }); err != nil {
		return false, err
	}
	if err := tx.Commit(); err != nil {
		return false, fmt.Errorf("recording %s: %w", f.Name, err)
	}
	return true, nil
}

// recordCopy is Record on PostgreSQL: the mark by INSERT and the rows by
// COPY (pgx's CopyFrom, the binary protocol), in one pgx transaction on
// one connection of the pool; several times cheaper than INSERTs.
func (s *Store) recordCopy(ctx context.Context, f *File, obs []Observation, lines []Line, fits []Fit) (bool, error) {
	conn, err := s.db.Conn(ctx)
	if err != nil {
		return false, err
	}
	defer conn.Close()
	won := false
	err = conn.Raw(func(dc any) error {
		pc := dc.(*stdlib.Conn).Conn()
		tx, err := pc.Begin(ctx)
		if err != nil {
			return err
		}
		defer tx.Rollback(context.WithoutCancel(ctx))
		err = tx.QueryRow(ctx, s.d.sql(markSQL), markArgs(f)...).Scan(&f.ID)
		if errors.Is(err, pgx.ErrNoRows) {
			return nil
		}
		if err != nil {
			return fmt.Errorf("recording %s: %w", f.Name, err)
		}
		if _, err := tx.Exec(ctx, s.d.sql(reopenSQL), f.Job, f.Night); err != nil {
			return fmt.Errorf("recording %s: %w", f.Name, err)
		}
		for _, t := range []struct {
			table, cols string
			n           int
			row         func(i int, a []any) []any
		}{
			{"observations", obsCols, len(obs), func(i int, a []any) []any { return obsRow(f.ID, &obs[i], a) }},
			{"lines", lineCols, len(lines), func(i int, a []any) []any { return lineRow(f.ID, &lines[i], a) }},
			{"instrument_fits", fitCols, len(fits), func(i int, a []any) []any { return fitRow(f.ID, &fits[i], a) }},
		} {
			cols := strings.Split(t.cols, ", ")
			buf := make([]any, 0, len(cols))
			src := pgx.CopyFromSlice(t.n, func(i int) ([]any, error) { return t.row(i, buf[:0]), nil })
			if _, err := tx.CopyFrom(ctx, pgx.Identifier{t.table}, cols, src); err != nil {
				return fmt.Errorf("history: %s: %w", t.table, err)
			}
		}
		if err := tx.Commit(ctx); err != nil {
			return fmt.Errorf("recording %s: %w", f.Name, err)
		}
		won = true
		return nil
	})
	return won, err
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

// insertRows inserts n rows into table, many to a statement; row appends
// the values of row i.
func insertRows(ctx context.Context, tx *sql.Tx, d dialect, table, cols string, n int, row func(i int, a []any) []any) error {
	if n == 0 {
		return nil
	}
	ncol := strings.Count(cols, ",") + 1
	per := min(maxParams/ncol, 1000)
	tuple := "(" + strings.TrimSuffix(strings.Repeat("?, ", ncol), ", ") + ")"
	stmtFor := func(k int) string {
		return d.sql("INSERT INTO " + table + " (" + cols + ") VALUES " + strings.TrimSuffix(strings.Repeat(tuple+", ", k), ", "))
	}
	var full *sql.Stmt
	args := make([]any, 0, per*ncol)
	for i := 0; i < n; i += per {
		k := min(per, n-i)
		args = args[:0]
		for j := i; j < i+k; j++ {
			args = row(j, args)
		}
		var err error
		if k == per {
			if full == nil {
				if full, err = tx.PrepareContext(ctx, stmtFor(per)); err != nil {
					return fmt.Errorf("history: %s: %w", table, err)
				}
				defer full.Close()
			}
			_, err = full.ExecContext(ctx, args...)
		} else {
			_, err = tx.ExecContext(ctx, stmtFor(k), args...)
		}
		if err != nil {
			return fmt.Errorf("history: %s: %w", table, err)
		}
	}
	return nil
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
	rows, err := s.db.QueryContext(ctx, s.d.sql(`SELECT DISTINCT f.night FROM files f WHERE f.job = ?
		AND NOT EXISTS (SELECT 1 FROM alert_nights a WHERE a.job = f.job AND a.night = f.night) ORDER BY f.night`), job)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var n string
		if err := rows.Scan(&n); err != nil {
			return nil, err
		}
		out = append(out, n)
	}
	return out, rows.Err()
}

// Alerts lists the alerts of a job, by night, kind and subject.
func (s *Store) Alerts(ctx context.Context, job string) ([]Alert, error) {
	rows, err := s.db.QueryContext(ctx, s.d.sql(`SELECT night, kind, subject, message FROM alerts WHERE job = ? ORDER BY night, kind, subject`), job)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []Alert
	for rows.Next() {
		var a Alert
		if err := rows.Scan(&a.Night, &a.Kind, &a.Subject, &a.Message); err != nil {
			return nil, err
		}
		out = append(out, a)
	}
	return out, rows.Err()
}
