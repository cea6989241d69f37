// Command benchdata writes the invented data files of the side-by-side benchmark
// (bench/side-by-side.py): a long-format CSV with a header "group,value", one row per
// observation, groups labelled G01, G02, ... and skewed values with ties.
//
// The data are invented. Each row draws its group uniformly from the k groups and its value
// from a lognormal distribution, exp(mu_g + sigma*Z) with mu_g = shift*g for group g =
// 0..k-1, sigma = 1 and Z standard normal, written with 3 decimals (so ties occur: about
// 10^4 distinct values cover most rows). Z comes from the Box-Muller transform of two
// uniforms; every uniform is the top 53 bits of one output of PCG-DXSM (math/rand/v2's
// PCG) seeded with (seed, 0x62656e6368), so the same seed, rows, groups and shift give the
// same file. (math.Exp, math.Log and math.Cos may differ in the last bit between
// architectures; a value would change only when it falls within that bit of a rounding
// boundary at 3 decimals, so the side-by-side script records each file's SHA-256.)
//
// Usage:
//
//	go run ./bench/cmd/benchdata -rows 1000000 -groups 10 -seed 1 -out data.csv
package main

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
)

func main() {
	rows := flag.Int("rows", 10000, "number of observations (rows after the header)")
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
	switch {
	case out == "":
		return errors.New("-out is required")
	case rows < 1 || rows > 100_000_000:
		return fmt.Errorf("-rows %d: want 1 to 10^8", rows)
	case groups < 2 || groups > 99:
		return fmt.Errorf("-groups %d: want 2 to 99", groups)
	case math.IsNaN(shift) || math.Abs(shift) > 10:
		return fmt.Errorf("-shift %v: want a number from -10 to 10", shift)
	}
	f, err := os.OpenFile(out, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return fmt.Errorf("create data file: %w", err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	if err := write(w, rows, groups, seed, shift); err != nil {
		f.Close()
		return fmt.Errorf("write %s: %w", out, err)
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return fmt.Errorf("write %s: %w", out, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("close %s: %w", out, err)
	}
	return nil
}

// write writes the header and rows rows to w as the package documentation describes.
func write(w *bufio.Writer, rows, groups int, seed uint64, shift float64) error {
	src := rand.NewPCG(seed, 0x62656e6368)
	// uniform returns a double in (0, 1]: the top 53 bits of one output, plus one, over 2^53.
	uniform := func() float64 { return float64(src.Uint64()>>11+1) / (1 << 53) }
	if _, err := w.WriteString("group,value\n"); err != nil {
		return err
	}
	line := make([]byte, 0, 64)
	var spare float64
	haveSpare := false
	for range rows {
		g := int(src.Uint64() % uint64(groups)) // bias below 2^-58 for k < 100
		var z float64
		if haveSpare {
			z, haveSpare = spare, false
		} else {
			// Box-Muller: two independent standard normals from two uniforms.
			r := math.Sqrt(-2 * math.Log(uniform()))
			t := 2 * math.Pi * uniform()
			z, spare, haveSpare = r*math.Cos(t), r*math.Sin(t), true
		}
		v := math.Exp(shift*float64(g) + z)
		line = append(line[:0], 'G')
		if g+1 < 10 {
			line = append(line, '0')
		}
		line = strconv.AppendInt(line, int64(g+1), 10)
		line = append(line, ',')
		line = strconv.AppendFloat(line, v, 'f', 3, 64)
		line = append(line, '\n')
		if _, err := w.Write(line); err != nil {
			return err
		}
	}
	return nil
}
