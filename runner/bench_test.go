package runner

import (
	"bufio"
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

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
			w.Flush()
			st, _ := f.Stat()
			f.Close()
			path := filepath.Join(dir, "plan.yaml")
			os.WriteFile(path, []byte(planHead+planTail), 0o644)
			p, err := spec.Load(path)
			if err != nil {
				b.Fatal(err)
			}
			b.SetBytes(st.Size())
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				prep, err := Prepare(p)
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
