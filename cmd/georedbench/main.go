// Command georedbench measures geored on a deterministic synthetic job,
// side by side with the parse floor and PROJ's geod:
//
//	georedbench gen   -dir DIR [-points 10000] [-lines 200000] [-obs 1000000]
//	georedbench floor FILE          (the parse floor: encoding/csv + strconv)
//	georedbench run   -dir DIR -geored BIN [-geod geod]
//
// gen writes points.csv, observations.csv, job.toml and geod.txt (the
// observations' end points as "lat1 lon1 lat2 lon2", for geod -I); run
// times each command, reads its peak resident size from the kernel's
// rusage, and prints wall time, observations per second and the ratios.
package main

import (
	"fmt"
	"os"
)

func main() {
	if len(os.Args) < 2 {
		fmt.Fprintln(os.Stderr, "usage: georedbench gen|floor|run ...")
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
	default:
		err = fmt.Errorf("unknown command %q", os.Args[1])
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "georedbench:", err)
		os.Exit(2)
	}
}
