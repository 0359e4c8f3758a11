package history

import (
	"context"
	"database/sql"
)

// A LinePoint is one night of a line: its residual by one instrument,
// either direction.
type LinePoint struct {
	Night               string
	Instrument          string
	From, To            string
	N                   int
	Geodesic            float64 // m
	ResidualMM, SigmaMM float64
	Flagged             int
}

// LineSeries is the residual over the nights of the line between marks a
// and b, either direction, of the job's reduced files, by night.
func (s *Store) LineSeries(ctx context.Context, job, a, b string) ([]LinePoint, error) {
	return s.lines(ctx, `SELECT f.night, l.instrument, l.from_mark, l.to_mark, l.n, l.geodesic_m, l.residual_mm, l.sigma_mm, l.flagged
		FROM lines l JOIN files f ON f.id = l.file_id
		WHERE f.job = ? AND ((l.from_mark = ? AND l.to_mark = ?) OR (l.from_mark = ? AND l.to_mark = ?))
		ORDER BY f.night, f.id, l.instrument`, job, a, b, b, a)
}

// MarkSeries is every night's lines that meet at mark, by night.
func (s *Store) MarkSeries(ctx context.Context, job, mark string) ([]LinePoint, error) {
	return s.lines(ctx, `SELECT f.night, l.instrument, l.from_mark, l.to_mark, l.n, l.geodesic_m, l.residual_mm, l.sigma_mm, l.flagged
		FROM lines l JOIN files f ON f.id = l.file_id
		WHERE f.job = ? AND (l.from_mark = ? OR l.to_mark = ?)
		ORDER BY f.night, f.id, l.from_mark, l.to_mark, l.instrument`, job, mark, mark)
}

// LinesBetween is the job's lines of the nights from since to until
// (YYYY-MM-DD, both included), by night.
func (s *Store) LinesBetween(ctx context.Context, job, since, until string) ([]LinePoint, error) {
	return s.lines(ctx, `SELECT f.night, l.instrument, l.from_mark, l.to_mark, l.n, l.geodesic_m, l.residual_mm, l.sigma_mm, l.flagged
		FROM lines l JOIN files f ON f.id = l.file_id
		WHERE f.job = ? AND f.night >= ? AND f.night <= ? ORDER BY f.night, f.id, l.from_mark, l.to_mark, l.instrument`, job, since, until)
}

func (s *Store) lines(ctx context.Context, q string, args ...any) ([]LinePoint, error) {
	return queryAll(ctx, s, q, args, func(rows *sql.Rows, p *LinePoint) error {
		return rows.Scan(&p.Night, &p.Instrument, &p.From, &p.To, &p.N, &p.Geodesic, &p.ResidualMM, &p.SigmaMM, &p.Flagged)
	})
}

// queryAll runs the query q (in the store's dialect) and returns its rows,
// each read by scan into a T.
func queryAll[T any](ctx context.Context, s *Store, q string, args []any, scan func(*sql.Rows, *T) error) ([]T, error) {
	rows, err := s.db.QueryContext(ctx, s.d.sql(q), args...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []T
	for rows.Next() {
		var v T
		if err := scan(rows, &v); err != nil {
			return nil, err
		}
		out = append(out, v)
	}
	return out, rows.Err()
}

// A FitPoint is one night's fit of one instrument.
type FitPoint struct {
	Night string
	Fit
}

// InstrumentSeries is the nightly fits of an instrument ("" for every
// instrument), by night.
func (s *Store) InstrumentSeries(ctx context.Context, job, instrument string) ([]FitPoint, error) {
	return queryAll(ctx, s, `SELECT f.night, x.instrument, x.n, x.constant_mm, x.constant_sigma_mm, x.scale_ppm, x.scale_sigma_ppm, x.evidence
		FROM instrument_fits x JOIN files f ON f.id = x.file_id
		WHERE f.job = ? AND (? = '' OR x.instrument = ?) ORDER BY f.night, f.id, x.instrument`, []any{job, instrument, instrument}, func(rows *sql.Rows, p *FitPoint) error {
		return rows.Scan(&p.Night, &p.Instrument, &p.N, &p.ConstantMM, &p.ConstantSigmaMM, &p.ScalePPM, &p.ScaleSigmaPPM, &p.Evidence)
	})
}

// Counts are the rows a job holds, for checks.
type Counts struct {
	Files, Observations, Lines, Fits int
}

// Count counts the rows of a job.
func (s *Store) Count(ctx context.Context, job string) (Counts, error) {
	var c Counts
	q := func(dst *int, query string) error {
		return s.db.QueryRowContext(ctx, s.d.sql(query), job).Scan(dst)
	}
	for _, x := range []struct {
		dst *int
		q   string
	}{
		{&c.Files, `SELECT COUNT(*) FROM files WHERE job = ?`},
		{&c.Observations, `SELECT COUNT(*) FROM observations o JOIN files f ON f.id = o.file_id WHERE f.job = ?`},
		{&c.Lines, `SELECT COUNT(*) FROM lines l JOIN files f ON f.id = l.file_id WHERE f.job = ?`},
		{&c.Fits, `SELECT COUNT(*) FROM instrument_fits x JOIN files f ON f.id = x.file_id WHERE f.job = ?`},
	} {
		if err := q(x.dst, x.q); err != nil && err != sql.ErrNoRows {
			return c, err
		}
	}
	return c, nil
}
