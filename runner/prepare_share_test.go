package runner

import (
	"context"
	"math"
	"slices"
	"testing"

	"rankplan/runner/data"
	"rankplan/runner/results"
)

// TestPrepareRows checks each analysis's rows against a row-by-row reading of the data
// (the group of each kept row in report order, its value, the counts and the exclusions),
// for data whose groups first appear out of report order, with nothing left out (the
// table's columns are then shared), with a missing value and with a missing label.
func TestPrepareRows(t *testing.T) {
	for _, tc := range []struct {
		name, csv string
		group     []int32 // kept rows: index into the report order A, B, C
		values    []float64
		excluded  []results.Exclusion
	}{
		{"all kept", "g,y\nC,1\nA,2\nB,3\nA,4\nC,5\nB,6\n",
			[]int32{2, 0, 1, 0, 2, 1}, []float64{1, 2, 3, 4, 5, 6}, []results.Exclusion{}},
		{"missing value", "g,y\nC,1\nA,NA\nB,3\nA,4\nC,5\nB,6\n",
			[]int32{2, 1, 0, 2, 1}, []float64{1, 3, 4, 5, 6}, []results.Exclusion{{Group: "A", Reason: results.ReasonMissingOutcome, Rows: 1}}},
		{"missing label", "g,y\nC,1\nA,2\nB,3\n,4\nC,5\nB,6\nA,7\n",
			[]int32{2, 0, 1, 2, 1, 0}, []float64{1, 2, 3, 5, 6, 7}, []results.Exclusion{{Group: "", Reason: results.ReasonMissingGroup, Rows: 1}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			prep, err := Prepare(context.Background(), methodPlanWith(t, "{method: asymptotic}", "{interval: none}", "", tc.csv))
			if err != nil {
				t.Fatal(err)
			}
			in := prep.Analyses[0]
			if !slices.Equal(in.Groups, []string{"A", "B", "C"}) || !slices.Equal(in.Group, tc.group) || !slices.Equal(in.Values, tc.values) {
				t.Errorf("groups %v, rows %v %v; want %v %v", in.Groups, in.Group, in.Values, tc.group, tc.values)
			}
			counts := make([]int, 3)
			for _, g := range tc.group {
				counts[g]++
			}
			if !slices.Equal(in.Counts, counts) || !slices.Equal(in.Excluded, tc.excluded) {
				t.Errorf("counts %v, excluded %v; want %v, %v", in.Counts, in.Excluded, counts, tc.excluded)
			}
		})
	}
}

// TestSelectSharesColumns: an analysis that keeps every row uses the table's outcome and
// group columns without a copy; one that leaves a row out has its own.
func TestSelectSharesColumns(t *testing.T) {
	p := methodPlanWith(t, "{method: asymptotic}", "{interval: none}", "", tiedToy)
	tab := &data.Table{Rows: 4, Groups: []string{"A", "B"}, Group: []int32{0, 1, 0, 1},
		Outcome: [][]float64{{1, 2, 3, 4}, {1, math.NaN(), 3, 4}}}
	groups := []string{"A", "B"}
	in, err := select_(p, 0, tab, groups, tab.Outcome[0], nil)
	if err != nil {
		t.Fatal(err)
	}
	if &in.Values[0] != &tab.Outcome[0][0] || &in.Group[0] != &tab.Group[0] || !slices.Equal(in.Counts, []int{2, 2}) {
		t.Errorf("every row kept: the columns are copied (or counts %v are wrong)", in.Counts)
	}
	in, err = select_(p, 0, tab, groups, tab.Outcome[1], nil)
	if err != nil {
		t.Fatal(err)
	}
	if &in.Values[0] == &tab.Outcome[1][0] || !slices.Equal(in.Values, []float64{1, 3, 4}) || !slices.Equal(in.Group, []int32{0, 0, 1}) {
		t.Errorf("a row left out: values %v, groups %v", in.Values, in.Group)
	}
}
