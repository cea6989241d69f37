package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// exactBenchGroups returns invented data for the given group sizes (fixed seed):
// standard normal draws with group i shifted by shift·i, rounded to multiples of
// 1/grid when grid > 0. grid 20 gives a few ties (27 distinct values among the 30 of
// (10,10,10), 21 among the 24 of (6,6,6,6)), grid 3 many (11 and 12).
func exactBenchGroups(sizes []int, grid, shift float64) [][]float64 {
	rng := rand.New(rand.NewPCG(7, uint64(len(sizes))))
	groups := make([][]float64, len(sizes))
	for i, n := range sizes {
		for range n {
			v := rng.NormFloat64() + shift*float64(i)
			if grid > 0 {
				v = math.Round(v*grid) / grid
			}
			groups[i] = append(groups[i], v)
		}
	}
	return groups
}

// exactBenchTies names the tie levels of the benchmarks: the grid of exactBenchGroups.
var exactBenchTies = []struct {
	name string
	grid float64
}{{"none", 0}, {"few", 20}, {"many", 3}}

func exactSizesName(sizes []int) string {
	s := make([]string, len(sizes))
	for i, n := range sizes {
		s[i] = fmt.Sprint(n)
	}
	return strings.Join(s, ",")
}

// BenchmarkKruskalWallisExact times the exact p with the default budget on the
// target designs (k = 3 with N = 30, k = 4 with N = 24, with and without ties, under
// the null and with a shift), on (5,5,5) and the plant weights of Dobson (1983, docs/methods.md
// §8.2), and on designs at the edge of the default budget. States, Work and P are
// reported per run; a design over the budget reports errors=1 and its time is the
// time to refuse it. Run with -benchtime=1x: every run is deterministic.
func BenchmarkKruskalWallisExact(b *testing.B) {
	type design struct {
		name   string
		groups [][]float64
	}
	var designs []design
	add := func(sizes []int, tie int, shift float64) {
		ties := exactBenchTies[tie]
		name := fmt.Sprintf("%s/ties=%s/shift=%v", exactSizesName(sizes), ties.name, shift)
		designs = append(designs, design{name, exactBenchGroups(sizes, ties.grid, shift)})
	}
	designs = append(designs, design{"Dobson1983PlantWeights", dobson1983PlantWeights})
	for _, sizes := range [][]int{{5, 5, 5}, {10, 10, 10}, {6, 6, 6, 6}} {
		for tie := range exactBenchTies {
			add(sizes, tie, 0)
			add(sizes, tie, 0.5)
		}
	}
	// Larger designs, at the edge of the default budget: the largest that fit and
	// some that do not (these show how fast the budget stops a run).
	for _, sizes := range [][]int{{14, 14, 14}, {16, 16, 16}, {9, 10, 11}, {10, 12, 14}, {7, 7, 7, 7}, {4, 4, 4, 4, 4}, {3, 3, 3, 3, 3, 3}, {80, 80}, {120, 120}} {
		add(sizes, 0, 0)
		add(sizes, 2, 0)
	}
	for _, d := range designs {
		b.Run(d.name, func(b *testing.B) {
			r := mustRank(b, d.groups)
			var res Exact
			var err error
			b.ReportAllocs()
			for b.Loop() {
				res, err = KruskalWallisExact(context.Background(), r, ExactBudget{})
			}
			if err != nil {
				if !errors.Is(err, ErrExactBudget) {
					b.Fatal(err)
				}
				b.ReportMetric(1, "errors")
				return
			}
			b.ReportMetric(float64(res.States), "states")
			b.ReportMetric(float64(res.Work), "work")
			b.ReportMetric(res.P, "p")
		})
	}
}
