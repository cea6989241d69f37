package data

import (
	"context"
	"encoding/hex"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"testing"
)

// reference is testdata/reference.json, written by testdata/reference.py from the
// invented CSV files in testdata with Python 3.11.2's csv module, float(),
// decimal.Decimal and hashlib (Debian python3).
type reference struct {
	Generator string `json:"generator"`
	Cases     []struct {
		File          string      `json:"file"`
		Delimiter     string      `json:"delimiter"`
		Decimal       string      `json:"decimal"`
		Group         string      `json:"group"`
		Outcomes      []string    `json:"outcomes"`
		Missing       []string    `json:"missing"`
		SHA256        string      `json:"sha256"`
		Size          int64       `json:"size"`
		Rows          int         `json:"rows"`
		Groups        []string    `json:"groups"`
		GroupIDs      []int32     `json:"group_ids"`
		Line          []int32     `json:"line"`
		Outcome       [][]*string `json:"outcome"` // repr() of each float; null for missing
		HighPrecision int         `json:"high_precision"`
	} `json:"cases"`
}

// TestFixturesAgainstPython loads the decimal-comma + semicolon, tab, BOM + CRLF and
// multi-line-label files and compares every result with Python's reading of them.
func TestFixturesAgainstPython(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("testdata", "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref reference
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) != 4 {
		t.Fatalf("reference.json has %d cases, want 4", len(ref.Cases))
	}
	for _, c := range ref.Cases {
		t.Run(c.File, func(t *testing.T) {
			opt := Options{Delimiter: c.Delimiter[0], Decimal: c.Decimal[0], GroupColumn: c.Group,
				OutcomeColumns: c.Outcomes, MissingTokens: c.Missing}
			tab, err := LoadFile(context.Background(), filepath.Join("testdata", c.File), opt)
			if err != nil {
				t.Fatal(err)
			}
			if got := hex.EncodeToString(tab.SHA256[:]); got != c.SHA256 || tab.Size != c.Size {
				t.Errorf("SHA256/Size = %s/%d, want %s/%d", got, tab.Size, c.SHA256, c.Size)
			}
			if tab.Rows != c.Rows || !slices.Equal(tab.Groups, c.Groups) || !slices.Equal(tab.Group, c.GroupIDs) ||
				!slices.Equal(tab.Line, c.Line) || tab.HighPrecisionCells != c.HighPrecision {
				t.Errorf("got rows %d groups %q ids %v lines %v hp %d\nwant rows %d groups %q ids %v lines %v hp %d",
					tab.Rows, tab.Groups, tab.Group, tab.Line, tab.HighPrecisionCells,
					c.Rows, c.Groups, c.GroupIDs, c.Line, c.HighPrecision)
			}
			for k, col := range c.Outcome {
				for i, s := range col {
					want := math.NaN()
					if s != nil {
						if want, err = strconv.ParseFloat(*s, 64); err != nil {
							t.Fatal(err)
						}
					}
					if got := tab.Outcome[k][i]; !sameFloat(got, want) {
						t.Errorf("%s row %d: got %v, want %v", c.Outcomes[k], i, got, want)
					}
				}
			}
		})
	}
}
