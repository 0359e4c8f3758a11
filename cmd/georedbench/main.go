// Command georedbench measures geored on a deterministic synthetic job,
// side by side with the parse floor and PROJ's geod:
//
//	georedbench gen   -dir DIR [-points 10000] [-lines 200000] [-obs 1000000]
//	georedbench floor FILE          (the parse floor: encoding/csv + strconv)
//	georedbench run   -dir DIR -geored BIN [-geod geod]
//	georedbench mem   -dir DIR -geored BIN [-points 1000000] [-lines 2000000]
//	georedbench soak  -dir DIR -geored BIN [-obs 10000000] [-base-obs 1000000] [-max-growth 16]
//
// gen writes points.csv, observations.csv, job.toml and geod.txt (the
// observations' end points as "lat1 lon1 lat2 lon2", for geod -I); run
// times each command, reads its peak resident size from the kernel's
// rusage, and prints wall time, observations per second and the ratios;
// mem measures the bytes a control point and a distinct line take (peak
// RSS less start-up), and soak fails when the peak RSS grows with the
// observations.
package main

import (
	"fmt"
	"os"
)

func main() {
	if len(os.Args) < 2 {
		fmt.Fprintln(os.Stderr, "usage: georedbench gen|floor|run|mem|soak ...")
		os.Exit(2)
	}
	var err error
	switch os.Args[1] {
	case "gen":
		err = gen(os.Args[2:])
	case "floor":
		err = floor(os.Args[2:])
	case "run":
		err = runBench(os.Args[2:])
	case "mem":
		err = memBench(os.Args[2:])
	case "soak":
		err = soak(os.Args[2:])
	default:
		err = fmt.Errorf("unknown command %q", os.Args[1])
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "georedbench:", err)
		os.Exit(2)
	}
}
