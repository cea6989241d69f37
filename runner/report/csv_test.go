package report

import (
	"bytes"
	"encoding/csv"
	"testing"

	"rankplan/runner/results"
)

// TestCellText checks the protection of text cells against spreadsheet formulas (the OWASP
// advice on CSV injection: a leading =, +, -, @, tab or carriage return starts a formula in
// common spreadsheets; common practice). Numbers stay as they are.
func TestCellText(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"A", "A"},
		{"", ""},
		{"=HYPERLINK(\"http://x.invalid\",\"click\")", "'=HYPERLINK(\"http://x.invalid\",\"click\")"},
		{"+cmd|' /C calc'!A0", "'+cmd|' /C calc'!A0"},
		{"-2+3", "'-2+3"},
		{"@SUM(1,2)", "'@SUM(1,2)"},
		{"\t=1", "'\t=1"},
		{"\r=1", "'\r=1"},
		{"-1", "-1"},
		{"+2.5", "+2.5"},
		{"-1e3", "-1e3"},
		{"a=b", "a=b"},
		{"dose -1", "dose -1"},
	} {
		if got := cellText(tc.in); got != tc.want {
			t.Errorf("cellText(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// TestPairsCSVInjection writes a pair whose group labels are formulas and a pair that is
// not computable, and reads the table back.
func TestPairsCSVInjection(t *testing.T) {
	pair := results.Pair{Groups: [2]string{"=1+1", "@A1"}, Statistic: ptr(1.5), P: ptr(0.1), PAdjusted: ptr(0.2),
		HodgesLehmann: results.HLShift{Interval: results.Interval{Level: 0.95}}}
	none := results.Pair{Groups: [2]string{"-x", "B"}, NotComputable: "every observation of the two groups has the same value",
		HodgesLehmann: results.HLShift{Interval: results.Interval{Level: 0.95}}}
	res := &results.Results{Analyses: []results.Analysis{{ID: "a", Outcome: "+y", Status: "ok",
		PostHoc: &results.PostHoc{Method: "dunn", Adjust: "holm", Family: "all-pairs", Ran: true, Statistic: "z", Pairs: []results.Pair{pair, none}}}}}
	var b bytes.Buffer
	if err := PairsCSV(&b, res); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := func(name string) int {
		for i, h := range rows[0] {
			if h == name {
				return i
			}
		}
		t.Fatalf("no column %q", name)
		return -1
	}
	if len(rows) != 3 {
		t.Fatalf("%d rows, want 3", len(rows))
	}
	checks := []struct {
		row  int
		col  string
		want string
	}{
		{1, "outcome", "'+y"}, {1, "group1", "'=1+1"}, {1, "group2", "'@A1"}, {1, "p", "0.1"}, {1, "not_computable", ""},
		{2, "group1", "'-x"}, {2, "statistic", ""}, {2, "p", ""}, {2, "p_adjusted", ""}, {2, "reject", "false"},
		{2, "not_computable", "every observation of the two groups has the same value"},
	}
	for _, c := range checks {
		if got := rows[c.row][col(c.col)]; got != c.want {
			t.Errorf("row %d %s = %q, want %q", c.row, c.col, got, c.want)
		}
	}
}
