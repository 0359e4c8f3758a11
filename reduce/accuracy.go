package reduce

import (
	"strconv"
	"strings"
)

// AccuracyClass is a named published accuracy standard for a distance,
// usable as a job's tolerance.
type AccuracyClass struct {
	Name   string
	Source string
	Spec   DistanceSpec
}

// accuracyClasses lists the classes by name. The values are recalled from
// the standards (REFERENCES.md §6 marks them [memory]); check them against
// the printed documents before relying on them for contract work.
var accuracyClasses = []AccuracyClass{
	// FGCC (1984), Standards and Specifications for Geodetic Control
	// Networks: distance accuracy as a proportion 1:N [memory of the table].
	fgcc1984("first-order", 100000),
	fgcc1984("second-order-i", 50000),
	fgcc1984("second-order-ii", 20000),
	fgcc1984("third-order-i", 10000),
	fgcc1984("third-order-ii", 5000),
	// FGCC (1988/89), Geometric Geodetic Accuracy Standards and
	// Specifications for Using GPS Relative Positioning Techniques: 95 %
	// limit sqrt(e² + (0.1·d·p)²) cm, d in km, i.e. e + p ppm in RSS
	// [memory].
	fgcc1989("aa", 3e-3, 0.01),
	fgcc1989("a", 5e-3, 0.1),
	fgcc1989("b", 8e-3, 1),
	fgcc1989("c-1", 10e-3, 10),
	fgcc1989("c-2-i", 20e-3, 20),
	fgcc1989("c-2-ii", 30e-3, 50),
	fgcc1989("c-3", 50e-3, 100),
	// FGDC-STD-007.2-1998, Geospatial Positioning Accuracy Standards part 2:
	// local accuracy classes at 95 % [memory of the list].
	fgdc1998("1-millimeter", 1e-3), fgdc1998("2-millimeter", 2e-3), fgdc1998("5-millimeter", 5e-3),
	fgdc1998("1-centimeter", 1e-2), fgdc1998("2-centimeter", 2e-2), fgdc1998("5-centimeter", 5e-2),
	fgdc1998("1-decimeter", 0.1), fgdc1998("2-decimeter", 0.2), fgdc1998("5-decimeter", 0.5),
	fgdc1998("1-meter", 1), fgdc1998("2-meter", 2), fgdc1998("5-meter", 5), fgdc1998("10-meter", 10),
}

func fgcc1984(name string, n float64) AccuracyClass {
	return AccuracyClass{
		Name:   "fgcc-1984/" + name,
		Source: "FGCC 1984 distance accuracy 1:" + strconv.FormatFloat(n, 'f', 0, 64) + " [memory]",
		Spec:   DistanceSpec{PPM: 1e6 / n, Rule: Linear, Level: Percent95},
	}
}

func fgcc1989(name string, e, p float64) AccuracyClass {
	return AccuracyClass{
		Name:   "fgcc-gps-1989/" + name,
		Source: "FGCC 1988/89 GPS relative positioning order " + strings.ToUpper(name) + ", 95 % [memory]",
		Spec:   DistanceSpec{Constant: e, PPM: p, Rule: RSS, Level: Percent95},
	}
}

func fgdc1998(name string, v float64) AccuracyClass {
	return AccuracyClass{
		Name:   "fgdc-1998/" + name,
		Source: "FGDC-STD-007.2-1998 local accuracy class " + name + ", 95 % [memory]",
		Spec:   DistanceSpec{Constant: v, Rule: Linear, Level: Percent95},
	}
}

// AccuracyClassNamed returns the published accuracy class with the given
// name (case ignored), e.g. "fgcc-1984/second-order-i",
// "fgcc-gps-1989/b", "fgdc-1998/2-centimeter".
func AccuracyClassNamed(name string) (AccuracyClass, error) {
	key := strings.ToLower(strings.TrimSpace(name))
	for _, c := range accuracyClasses {
		if c.Name == key {
			return c, nil
		}
	}
	return AccuracyClass{}, &UnknownClassError{Name: name}
}

// AccuracyClasses returns the names of all known classes.
func AccuracyClasses() []string {
	names := make([]string, len(accuracyClasses))
	for i, c := range accuracyClasses {
		names[i] = c.Name
	}
	return names
}

// UnknownClassError reports an accuracy class name that is not known.
type UnknownClassError struct{ Name string }

func (e *UnknownClassError) Error() string {
	return "accuracy class " + strconv.Quote(e.Name) + ": want one of " + strings.Join(AccuracyClasses(), ", ")
}
