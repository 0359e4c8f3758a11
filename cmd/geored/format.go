package main

import (
	"fmt"
	"math"

	"github.com/golang/geo/s1"
)

// dms writes an angle as degrees, minutes and seconds with the given
// decimals of the seconds, carrying a rounded 60″ into the minutes.
func dms(a s1.Angle, decimals int) string {
	d := a.Degrees()
	sign := ""
	if d < 0 {
		sign, d = "-", -d
	}
	scale := math.Pow(10, float64(decimals))
	total := math.Round(d * 3600 * scale) // in units of the last decimal of the seconds
	secUnits := math.Mod(total, 60*scale)
	minutes := math.Mod(math.Floor(total/(60*scale)), 60)
	deg := math.Floor(total / (3600 * scale))
	width := 2
	if decimals > 0 {
		width = 3 + decimals
	}
	return fmt.Sprintf("%s%d°%02d′%0*.*f″", sign, int(deg), int(minutes), width, decimals, secUnits/scale)
}
