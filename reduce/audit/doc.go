// Package audit checks a subcontractor's delivered baselines — distances
// of a stated kind (grid, ellipsoid, horizontal at the marks' heights, sea
// level) and GNSS vectors — against the control coordinates, line by
// line, and says why a line fails: the residual in mm and ppm, its σ, the
// verdict against the job's tolerance with the margin, and the usual
// reduction error whose signature fits the difference (a scale factor
// applied twice or not at all, the elevation factor left out, the geoid
// separation ignored, the ppm or prism constant applied twice, a sea-level
// distance delivered as ellipsoidal, grid and ground swapped, a GNSS
// vector to the antenna rather than the mark), or "no known cause".
//
// Like reduce it is pure functions over plain values: the caller
// (reduce/job) computes the control geometry with PROJ and hands it in.
// Lengths are metres, angles s1.Angle.
package audit
