// Package benchdata makes the invented data of rankplan's benchmarks (bench/side-by-side.py
// and the Go benchmarks in bench/): observations in k groups with skewed values and ties.
//
// Each observation draws its group g uniformly from 0..k-1 and its value from a lognormal
// distribution, exp(shift*g + Z) with Z standard normal, written with 3 decimals (so ties
// occur: about 10^4 distinct values cover most rows). Z comes from the Box-Muller transform
// of two uniforms, taken in pairs; every uniform is the top 53 bits of one output of
// PCG-DXSM (math/rand/v2's PCG) seeded with (seed, 0x62656e6368), plus one, over 2^53, and
// the group is one output modulo k. So the same seed, size, k and shift give the same
// data. (math.Exp, math.Log, math.Cos and math.Sin may differ in the last bit between
// architectures; a value changes only when it falls within that bit of a rounding boundary
// at 3 decimals, so the side-by-side script records each file's SHA-256.)
package benchdata

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strconv"
)

// MaxGroups is the largest number of groups: labels are G01 to G99.
const MaxGroups = 99

// Generate draws rows observations as the package documentation describes and calls emit
// with each one's group (0-based) and its value as text with 3 decimals, in order. The text
// is valid until the next call. An error from emit stops the generation and is returned.
func Generate(rows, groups int, seed uint64, shift float64, emit func(group int, value []byte) error) error {
	switch {
	case rows < 0:
		return fmt.Errorf("benchdata: %d rows: want 0 or more", rows)
	case groups < 2 || groups > MaxGroups:
		return fmt.Errorf("benchdata: %d groups: want 2 to %d", groups, MaxGroups)
	case math.IsNaN(shift) || math.Abs(shift) > 10:
		return fmt.Errorf("benchdata: shift %v: want a number from -10 to 10", shift)
	}
	src := rand.NewPCG(seed, 0x62656e6368)
	uniform := func() float64 { return float64(src.Uint64()>>11+1) / (1 << 53) }
	text := make([]byte, 0, 32)
	var spare float64
	haveSpare := false
	for range rows {
		g := int(src.Uint64() % uint64(groups)) // bias below 2^-57 for k < 100
		var z float64
		if haveSpare {
			z, haveSpare = spare, false
		} else {
			// Box-Muller: two independent standard normals from two uniforms.
			r := math.Sqrt(-2 * math.Log(uniform()))
			t := 2 * math.Pi * uniform()
			z, spare, haveSpare = r*math.Cos(t), r*math.Sin(t), true
		}
		text = strconv.AppendFloat(text[:0], math.Exp(shift*float64(g)+z), 'f', 3, 64)
		if err := emit(g, text); err != nil {
			return err
		}
	}
	return nil
}

// Label is the label of group g (0-based) in the data files: G01, G02, ...
func Label(g int) string { return fmt.Sprintf("G%02d", g+1) }

// WriteCSV writes rows observations as Generate makes them to w as a CSV file with the
// header "group,value" and one line per observation: the group's [Label] and the value.
func WriteCSV(w io.Writer, rows, groups int, seed uint64, shift float64) error {
	if groups < 2 || groups > MaxGroups {
		return fmt.Errorf("benchdata: %d groups: want 2 to %d", groups, MaxGroups)
	}
	labels := make([][]byte, groups)
	for g := range labels {
		labels[g] = []byte(Label(g) + ",")
	}
	bw := bufio.NewWriterSize(w, 1<<20)
	bw.WriteString("group,value\n")
	err := Generate(rows, groups, seed, shift, func(g int, v []byte) error {
		bw.Write(labels[g])
		bw.Write(v)
		return bw.WriteByte('\n') // a bufio.Writer keeps its first error
	})
	if err != nil {
		return err
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("benchdata: %w", err)
	}
	return nil
}
