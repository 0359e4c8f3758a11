// Package drift finds, in a job's history of nights, the two slow faults
// a nightly run must report: an instrument whose calibration drifts, and a
// control mark that has moved. It is pure: the caller reads the series
// from the history store and hands them over as plain values; nothing
// here reads a file or a database.
//
// Instruments (InstrumentTrend): the night's fitted additive constant (mm) and
// scale (ppm) of the fit of reduce, night after night; their trend is
// Theil–Sen's robust slope (Theil 1950, Sen 1968) and the Mann–Kendall
// test (Mann 1945, Kendall 1975) says whether it is a trend at all.
//
// Marks (MarkShifts): the residuals of the lines that meet at a mark, each
// against its own baseline (the median of the earlier nights), with a 2-D
// displacement of the mark and a change common to the lines fitted to
// their changes by least squares, and the displacement tested with χ²(2).
package drift
