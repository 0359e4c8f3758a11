package reduce_test

import (
	"fmt"

	"github.com/geored/geored/reduce"
	"github.com/golang/geo/s1"
)

// A 1 km sight read horizontal from the ground: the target the line of
// sight reaches stands 0.0683 m above the surface at k = 0.13, the trade's
// curvature-and-refraction figure; the arc on the surface is shorter than
// the sight by S³/3R², 8 µm.
func ExampleEllipsoidDistanceFromZenith() {
	g, err := reduce.EllipsoidDistanceFromZenith(1000, 90*s1.Degree, 0, 0.13, 6371008.8)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("arc %.4f m, target height %.4f m\n", g.Arc, g.HeightB)
	// Output: arc 1000.0000 m, target height 0.0683 m
}

// A slope distance shorter than the height difference cannot be reduced;
// the error names the stage and the reason.
func ExampleEllipsoidDistance_badGeometry() {
	_, err := reduce.EllipsoidDistance(10, 100, 112.5, reduce.Section{Radius: 6371008.8})
	fmt.Println(err)
	// Output: geometry: slope distance 10 m, want at least the height difference 12.5000 m
}

// 2 mm + 2 ppm at 1500 m, linear and root-sum-square.
func ExampleDistanceSpec_At() {
	for _, rule := range []reduce.Combination{reduce.Linear, reduce.RSS} {
		spec := reduce.DistanceSpec{Constant: 0.002, PPM: 2, Rule: rule, Level: reduce.OneSigma}
		v, _ := spec.At(1500)
		fmt.Printf("%s: %.2f mm\n", rule, v*1e3)
	}
	// Output:
	// linear: 5.00 mm
	// root-sum-square: 3.61 mm
}

// A 12 km sight between towers 10 m and 12 m up, over ground 5, 7 and
// 8.5 m high, with 2 m of clearance asked for: the ray, 8.54 m up at
// 6 km by the rule 11 − 0.87·(6 km)²/2R, misses the minimum over two of
// the points, the worst by 0.84 m at 9 km.
func ExampleSightline_Check() {
	s, err := reduce.NewSightline(12000, 10, 12, 6371008.8, 0.13)
	if err != nil {
		fmt.Println(err)
		return
	}
	c, err := s.Check([]reduce.ProfilePoint{{Distance: 3000, Height: 5}, {Distance: 6000, Height: 7}, {Distance: 9000, Height: 8.5}}, 2)
	if err != nil {
		fmt.Println(err)
		return
	}
	w := c.Profile[c.Worst]
	fmt.Printf("clear %t: surface fails %t, %d of %d points fail; the worst at %.0f m, clearance %.4f m\n",
		c.Clear(), c.SurfaceFails, c.Failing, len(c.Profile), w.Distance, w.Clearance)
	// Output: clear false: surface fails false, 2 of 3 points fail; the worst at 9000 m, clearance 1.1565 m
}
