package stats_test

import (
	"fmt"

	"rankplan/stats"
)

func ExampleRank() {
	// Three invented groups; the value 2 is shared by groups 0 and 1.
	group := []int32{0, 0, 1, 1, 1, 2, 2}
	values := []float64{1, 2, 2, 4, 5, 3, 6}
	r, err := stats.Rank(group, values, 3)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("doubled rank sums:", r.RankSum2)
	for _, b := range r.Blocks {
		fmt.Printf("block of %d with midrank %.1f\n", b.Size, float64(b.Rank2)/2)
	}
	// Output:
	// doubled rank sums: [7 27 22]
	// block of 1 with midrank 1.0
	// block of 2 with midrank 2.5
	// block of 1 with midrank 4.0
	// block of 1 with midrank 5.0
	// block of 1 with midrank 6.0
	// block of 1 with midrank 7.0
}

func ExampleKruskalWallisTest() {
	// The Dobson (1983) plant weights: dried weights of plants, control and two treatments.
	groups := [][]float64{
		{4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14},
		{4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69},
		{6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26},
	}
	var group []int32
	var values []float64
	for i, g := range groups {
		for _, v := range g {
			group = append(group, int32(i))
			values = append(values, v)
		}
	}
	r, err := stats.Rank(group, values, len(groups))
	if err != nil {
		fmt.Println(err)
		return
	}
	kw, err := stats.KruskalWallisTest(r)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("H* = %.6f, df = %d, p = %.7f\n", kw.H, kw.DF, kw.P)
	fmt.Printf("mean ranks %.2f\n", kw.MeanRank)
	// Output:
	// H* = 7.988229, df = 2, p = 0.0184238
	// mean ranks [14.75 10.35 21.40]
}

func ExampleChiSquareUpperTail() {
	p, lp, _ := stats.ChiSquareUpperTail(5.991, 2)
	fmt.Printf("p = %.5f, log10 p = %.5f\n", p, lp)
	// Far beyond float64: p underflows to 0, log10 p is still exact.
	p, lp, _ = stats.ChiSquareUpperTail(5000, 2)
	fmt.Printf("p = %g, log10 p = %.4f\n", p, lp)
	// Output:
	// p = 0.05001, log10 p = -1.30093
	// p = 0, log10 p = -1085.7362
}

func ExampleQuartiles() {
	q1, med, q3, err := stats.Quartiles([]float64{1, 2, 3, 4, 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(q1, med, q3)
	// Output:
	// 2 3 4
}

// ExampleCompactLetters: four groups ordered by their mean ranks; the first and the last
// two differ, as do the second and the last (invented decisions).
func ExampleCompactLetters() {
	differ := [][]bool{
		{false, false, true, true},
		{false, false, false, true},
		{true, false, false, false},
		{true, true, false, false},
	}
	l, err := stats.CompactLetters(differ)
	if err != nil {
		fmt.Println(err)
		return
	}
	for g, names := range l.Names {
		fmt.Printf("group %d: %s %q\n", g+1, l.Text(g), names)
	}
	fmt.Println(stats.LetterName(0), stats.LetterName(51), stats.LetterName(52))
	// Output:
	// group 1: a ["a"]
	// group 2: ab ["a" "b"]
	// group 3: bc ["b" "c"]
	// group 4: c ["c"]
	// a Z a1
}
