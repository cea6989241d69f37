// Command benchdata writes an invented data file of the side-by-side benchmark
// (bench/side-by-side.py): a long-format CSV with a header "group,value", one row per
// observation, groups labelled G01, G02, ... and skewed values with 3 decimals, so that
// ties occur. How the values are drawn is the documentation of bench/internal/benchdata;
// the same flags give the same file.
//
// Usage:
//
//	go run ./bench/cmd/benchdata -rows 1000000 -groups 10 -shift 0.01 -seed 1 -out data.csv
package main

import (
	"errors"
	"flag"
	"fmt"
	"os"

	"rankplan/bench/internal/benchdata"
)

func main() {
	rows := flag.Int("rows", 10000, "number of observations (rows after the header), 1 to 10^8")
	groups := flag.Int("groups", 10, "number of groups, 2 to 99")
	seed := flag.Uint64("seed", 1, "seed of the generator")
	shift := flag.Float64("shift", 0.01, "difference of the log-scale location between neighbouring groups")
	out := flag.String("out", "", "the CSV file to create (must not exist)")
	flag.Parse()
	if err := run(*rows, *groups, *seed, *shift, *out); err != nil {
		fmt.Fprintln(os.Stderr, "benchdata:", err)
		os.Exit(1)
	}
}

func run(rows, groups int, seed uint64, shift float64, out string) error {
	if out == "" {
		return errors.New("-out is required")
	}
	if rows < 1 || rows > 100_000_000 {
		return fmt.Errorf("-rows %d: want 1 to 10^8", rows)
	}
	if groups < 2 || groups > benchdata.MaxGroups {
		return fmt.Errorf("-groups %d: want 2 to %d", groups, benchdata.MaxGroups)
	}
	f, err := os.OpenFile(out, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return fmt.Errorf("create data file: %w", err)
	}
	err = benchdata.WriteCSV(f, rows, groups, seed, shift)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(out)
		return fmt.Errorf("write %s: %w", out, err)
	}
	return nil
}
