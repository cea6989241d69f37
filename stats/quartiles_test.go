package stats

import (
	"math"
	"slices"
	"testing"
)

// TestQuartilesNumpy compares with numpy 1.24.2 percentile(x, [25, 50, 75]) with its
// default method "linear" (Hyndman & Fan type 7), from
// testdata/reference/kruskal_scipy.json. numpy evaluates the interpolation from the
// upper order statistic when the fraction is 1/2 or more, so the last bit may differ;
// the tolerance is 4 ulps.
func TestQuartilesNumpy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Quartiles {
		t.Run(c.Name, func(t *testing.T) {
			q1, med, q3, err := Quartiles(c.X)
			if err != nil {
				t.Fatal(err)
			}
			for _, v := range []struct {
				name      string
				got, want float64
			}{{"Q1", q1, c.Q1}, {"median", med, c.Median}, {"Q3", q3, c.Q3}} {
				if !relClose(v.got, v.want, 4*0x1p-52) {
					t.Errorf("%s = %.17g, numpy 1.24.2 percentile %.17g", v.name, v.got, v.want)
				}
			}
		})
	}
}

func TestQuartilesHandCases(t *testing.T) {
	// Worked by hand from h = (n-1)p, Q = x[⌊h⌋] + (h-⌊h⌋)(x[⌊h⌋+1] - x[⌊h⌋]).
	big := math.MaxFloat64
	tests := []struct {
		name       string
		x          []float64
		q1, md, q3 float64
		ulps       int // allowed distance from the exact value, in units in the last place
	}{
		{"n = 1", []float64{-4.5}, -4.5, -4.5, -4.5, 0},
		{"n = 2", []float64{10, 20}, 12.5, 15, 17.5, 0},
		{"n = 4", []float64{1, 2, 3, 4}, 1.75, 2.5, 3.25, 0},
		{"n = 5, on order statistics", []float64{1, 3, 5, 7, 9}, 3, 5, 7, 0},
		{"all equal", []float64{2, 2, 2}, 2, 2, 2, 0},
		// The gap 2·MaxFloat64 overflows float64; the exact quartiles are -big/2, 0 and
		// big/2, and 0.75·gap rounds, so Q3 may be one ulp off.
		{"gap overflows", []float64{-big, big}, -big / 2, 0, big / 2, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			x0 := slices.Clone(tt.x)
			q1, md, q3, err := Quartiles(tt.x)
			if err != nil {
				t.Fatal(err)
			}
			if !withinULPs(q1, tt.q1, tt.ulps) || !withinULPs(md, tt.md, tt.ulps) || !withinULPs(q3, tt.q3, tt.ulps) {
				t.Errorf("Quartiles = %v, %v, %v; want %v, %v, %v", q1, md, q3, tt.q1, tt.md, tt.q3)
			}
			if !slices.Equal(tt.x, x0) {
				t.Errorf("input changed: %v, was %v", tt.x, x0)
			}
		})
	}
}

func TestQuartilesErrors(t *testing.T) {
	tests := []struct {
		name string
		x    []float64
	}{
		{"nil", nil},
		{"empty", []float64{}},
		{"not sorted", []float64{1, 3, 2}},
		{"NaN", []float64{1, math.NaN(), 2}},
		{"+Inf", []float64{1, 2, math.Inf(1)}},
		{"-Inf", []float64{math.Inf(-1), 2}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if q1, md, q3, err := Quartiles(tt.x); err == nil {
				t.Errorf("Quartiles = %v, %v, %v; want an error", q1, md, q3)
			}
		})
	}
}

// withinULPs reports whether got is at most n representable float64 values from want.
func withinULPs(got, want float64, n int) bool {
	for range n {
		if got == want {
			return true
		}
		want = math.Nextafter(want, got)
	}
	return got == want
}

// TestQuartileSkewness checks Bowley's coefficient on hand-worked quartiles (the formula is
// common practice): a median midway between the quartiles gives 0, a median at a quartile
// gives ±1, and Q1 = Q3 has no value. The fourth case is group L1 of examples/dissolution
// (quartiles 12.375, 14.75, 15.625 in its results): (0.875 − 2.375)/3.25 = −6/13.
func TestQuartileSkewness(t *testing.T) {
	u := math.SmallestNonzeroFloat64
	for _, tc := range []struct{ q1, m, q3, want float64 }{
		{5, 5.75, 6.5, 0},
		{1, 1, 2.25, 1},
		{2, 4, 4, -1},
		{12.375, 14.75, 15.625, -6.0 / 13},
		{-math.MaxFloat64, 0, math.MaxFloat64, 0},
		{-math.MaxFloat64, -math.MaxFloat64, math.MaxFloat64, 1},
		// Worked by hand in units of u = 2^-1074 (subnormal quartiles, where halving
		// rounds): (1 − 0)/1 = 1, (0 − 1)/1 = −1, (5 − 3)/8 = 1/4, (1 − 1)/2 = 0.
		{3 * u, 3 * u, 4 * u, 1},
		{3 * u, 4 * u, 4 * u, -1},
		{-3 * u, 0, 5 * u, 0.25},
		{u, 2 * u, 3 * u, 0},
		// A subnormal median beside quartiles near MaxFloat64: (M − 0) − (0 + M) = 0.
		{-math.MaxFloat64, u, math.MaxFloat64, 0},
	} {
		got, ok := QuartileSkewness(tc.q1, tc.m, tc.q3)
		if !ok || math.Abs(got-tc.want) > 1e-15 {
			t.Errorf("QuartileSkewness(%v, %v, %v) = %v, %v; want %v", tc.q1, tc.m, tc.q3, got, ok, tc.want)
		}
	}
	// No value: Q1 = Q3, Q3 < Q1, a NaN median, a median outside [Q1, Q3], infinite ends.
	for _, q := range [][3]float64{{3, 3, 3}, {4, 3, 2}, {1, math.NaN(), 2}, {1, 3, 2}, {1, 0, 2},
		{math.Inf(-1), 0, 1}, {0, 1, math.Inf(1)}, {math.NaN(), 1, 2}} {
		if got, ok := QuartileSkewness(q[0], q[1], q[2]); ok {
			t.Errorf("QuartileSkewness(%v) = %v, want no value", q, got)
		}
	}
}
