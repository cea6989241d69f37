package runner

import (
	"bufio"
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"rankplan/runner/report"
	"rankplan/spec"
)

// BenchmarkRunPlan measures a whole run of one Kruskal-Wallis analysis, from the CSV file
// on disk to the results struct: read and hash, select, rank, test. The data are invented:
// 4 groups of values with two decimals (so there are ties).
//
//	go test ./runner -run XXX -bench RunPlan -benchtime=1x
func BenchmarkRunPlan(b *testing.B) {
	for _, rows := range []int{1_000_000, 10_000_000} {
		b.Run(fmt.Sprintf("rows=%d", rows), func(b *testing.B) {
			path := benchData(b, rows, "")
			st, err := os.Stat(filepath.Join(filepath.Dir(path), "data.csv"))
			if err != nil {
				b.Fatal(err)
			}
			p, err := spec.Load(path)
			if err != nil {
				b.Fatal(err)
			}
			b.SetBytes(st.Size())
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				prep, err := Prepare(context.Background(), p)
				if err != nil {
					b.Fatal(err)
				}
				if _, err := Execute(context.Background(), prep, Options{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// benchData writes an invented data file of rows rows (4 groups, values with two decimals,
// so there are ties) and a plan of one Kruskal-Wallis analysis with the analysis keys extra
// into a new folder, and returns the plan's path.
func benchData(b *testing.B, rows int, extra string) string {
	b.Helper()
	dir := b.TempDir()
	f, err := os.Create(filepath.Join(dir, "data.csv"))
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriter(f)
	w.WriteString("g,y\n")
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < rows; i++ {
		g := i % 4
		fmt.Fprintf(w, "G%d,%.2f\n", g, 100+float64(g)+rng.NormFloat64()*10)
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	f.Close()
	path := filepath.Join(dir, "plan.yaml")
	plan := planHead + planTail + extra
	if err := os.WriteFile(path, []byte(plan), 0o644); err != nil {
		b.Fatal(err)
	}
	return path
}

const allPairs = "    posthoc: {method: dunn, adjust: holm, when: always}\n"

// BenchmarkRunFolder measures what `rankplan run` does end to end on 10^6 and 10^7 rows: load,
// test, Dunn comparisons of all pairs with Hodges-Lehmann shifts, and the run folder with
// its audit log, provenance and renderings (report.html, summary.md, pairs.csv).
//
//	go test ./runner -run XXX -bench 'RunFolder|Renderings' -benchtime=1x -benchmem
func BenchmarkRunFolder(b *testing.B) {
	for _, rows := range []int{1_000_000, 10_000_000} {
		b.Run(fmt.Sprintf("rows=%d", rows), func(b *testing.B) {
			path := benchData(b, rows, allPairs)
			out := b.TempDir()
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				i++
				if _, err := Run(context.Background(), path, RunOptions{Out: filepath.Join(out, fmt.Sprint(i))}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkRenderings measures the renderings alone (report.html with its plots, summary.md
// and pairs.csv) from the results of a run on 10^7 rows, so their share of a run shows.
func BenchmarkRenderings(b *testing.B) {
	p, err := spec.Load(benchData(b, 10_000_000, allPairs))
	if err != nil {
		b.Fatal(err)
	}
	prep, err := Prepare(context.Background(), p)
	if err != nil {
		b.Fatal(err)
	}
	ex, err := execute(context.Background(), prep, Options{})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := renderings(context.Background(), ex.results, report.Meta{}, ex.sorted, "run"); err != nil {
			b.Fatal(err)
		}
	}
}
