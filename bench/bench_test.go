package bench_test

// Benchmarks of the hot paths on the data of bench/side-by-side.py (invented: 10 groups,
// lognormal values with 3 decimals, see bench/internal/benchdata), so that a profile
// explains the side-by-side figures. None of them runs in go test without -bench.
//
//	go test ./bench -run XXX -bench . -benchtime=1x
//	go test ./bench -run XXX -bench 'Execute/dunn/rows=1000000' -benchtime=1x -cpuprofile cpu.out
//	go tool pprof -top cpu.out

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"rankplan/bench/internal/benchdata"
	"rankplan/runner"
	"rankplan/spec"
	"rankplan/stats"
)

// The settings of bench/side-by-side.py's large and small files.
const (
	groups, shift, seed = 10, 0.01, 1
	smallRows           = 30
	smallGroups         = 3
	smallShift          = 0.3
	smallSeed           = 3
)

// BenchmarkPairEffects times the pairwise effect sizes of one pair of groups of n values
// each: Cliff's delta and Vargha-Delaney A (stats.PairEffectSizes), and the Hodges-Lehmann
// shift with its Moses interval (stats.HodgesLehmannShift), the bulk of a Dunn run's
// work with 45 such pairs.
func BenchmarkPairEffects(b *testing.B) {
	for _, n := range []int{100_000, 1_000_000} {
		g, v, err := columns(2*n, 2, seed, shift)
		if err != nil {
			b.Fatal(err)
		}
		var x, y []float64
		for i, gi := range g {
			if gi == 0 {
				x = append(x, v[i])
			} else {
				y = append(y, v[i])
			}
		}
		b.Run(fmt.Sprintf("cliff/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := stats.PairEffectSizes(x, y); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("hodges-lehmann/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := stats.HodgesLehmannShift(x, y, 0.95); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkBootstrap times stats.KruskalWallisBootstrap on N observations in 10 groups
// with one block of resamples (stats.BootstrapBlockSize) per worker count, and reports
// resamples per second: a run's 2000 resamples take 2000 / that.
func BenchmarkBootstrap(b *testing.B) {
	for _, n := range []int{100_000, 1_000_000} {
		g, v, err := columns(n, groups, seed, shift)
		if err != nil {
			b.Fatal(err)
		}
		r, err := stats.Rank(g, v, groups)
		if err != nil {
			b.Fatal(err)
		}
		for _, workers := range []int{1, 2} {
			b.Run(fmt.Sprintf("N=%d/workers=%d", n, workers), func(b *testing.B) {
				opt := stats.BootstrapOptions{Seed: 15, AnalysisID: "bench", Resamples: stats.BootstrapBlockSize,
					Level: 0.95, Workers: workers}
				b.ReportAllocs()
				for b.Loop() {
					if _, err := stats.KruskalWallisBootstrap(context.Background(), r, opt); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(opt.Resamples)*float64(b.N)/b.Elapsed().Seconds(), "resamples/s")
			})
		}
	}
}

// BenchmarkExecute times runner.Prepare and runner.Execute, from the data file to the
// results, for the plans of bench/plans (no run folder, no renderings): the data path of
// each side-by-side case. The full plan's 2000 bootstrap resamples run at 10^5 rows only.
func BenchmarkExecute(b *testing.B) {
	cases := []struct {
		plan string
		rows int
	}{
		{"kw", 1_000_000}, {"dunn", 1_000_000}, {"kw", 10_000_000}, {"dunn", 10_000_000}, {"full", 100_000},
	}
	parent := b
	files := map[int]string{} // one file per size, kept by the parent for every plan
	for _, c := range cases {
		b.Run(fmt.Sprintf("%s/rows=%d", c.plan, c.rows), func(b *testing.B) {
			dir, ok := files[c.rows]
			if !ok {
				dir = parent.TempDir()
				if err := writeDataDir(dir, c.rows, groups, seed, shift); err != nil {
					b.Fatal(err)
				}
				files[c.rows] = dir
			}
			p, err := spec.Load(filepath.Join(dir, c.plan+".yaml"))
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			for b.Loop() {
				prep, err := runner.Prepare(context.Background(), p)
				if err != nil {
					b.Fatal(err)
				}
				if _, err := runner.Execute(context.Background(), prep, runner.Options{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkRunSmall times runner.Run, the whole of `rankplan run` but the process start,
// on the 30-row file for the plans kw, dunn and full: the fixed cost of a run (schema,
// audit log with its syncs, provenance with the executable's hash, renderings).
func BenchmarkRunSmall(b *testing.B) {
	dir := b.TempDir()
	if err := writeDataDir(dir, smallRows, smallGroups, smallSeed, smallShift); err != nil {
		b.Fatal(err)
	}
	for _, plan := range []string{"kw", "dunn", "full"} {
		b.Run(plan, func(b *testing.B) {
			out := b.TempDir()
			i := 0
			b.ReportAllocs()
			for b.Loop() {
				i++
				opt := runner.RunOptions{Out: filepath.Join(out, fmt.Sprint(i))}
				if _, err := runner.Run(context.Background(), filepath.Join(dir, plan+".yaml"), opt); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// writeDataDir writes data.csv (benchdata.WriteCSV) and copies of the plans of bench/plans
// into dir, as bench/side-by-side.py lays them out.
func writeDataDir(dir string, rows, k int, seed uint64, shift float64) error {
	f, err := os.Create(filepath.Join(dir, "data.csv"))
	if err != nil {
		return err
	}
	if err := benchdata.WriteCSV(f, rows, k, seed, shift); err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	plans, err := filepath.Glob(filepath.Join("plans", "*.yaml"))
	if err != nil || len(plans) == 0 {
		return fmt.Errorf("no plans in bench/plans: %v", err)
	}
	for _, p := range plans {
		text, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		if err := os.WriteFile(filepath.Join(dir, filepath.Base(p)), text, 0o644); err != nil {
			return err
		}
	}
	return nil
}

// columns returns rows observations as benchdata.Generate makes them, as group indices
// and the values read back from their text (what rankplan reads from the data file).
func columns(rows, k int, seed uint64, shift float64) ([]int32, []float64, error) {
	group := make([]int32, 0, rows)
	values := make([]float64, 0, rows)
	err := benchdata.Generate(rows, k, seed, shift, func(g int, v []byte) error {
		f, err := strconv.ParseFloat(string(v), 64)
		if err != nil {
			return fmt.Errorf("read back %q: %w", v, err)
		}
		group = append(group, int32(g))
		values = append(values, f)
		return nil
	})
	return group, values, err
}
