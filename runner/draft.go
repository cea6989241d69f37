package runner

import (
	"bufio"
	"context"
	"crypto/rand"
	"encoding/binary"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"rankplan/runner/data"
	"rankplan/runner/internal/natsort"
	"rankplan/spec"
)

// DraftOptions are the answers `rankplan init` takes from its flags.
type DraftOptions struct {
	DataPath  string // the CSV file, as the user named it
	PlanPath  string // where the plan will be written; "" for standard output
	Group     string
	Outcome   string
	Delimiter string // ",", ";", "tab" or "auto" (sniffed from the header line)
	Decimal   string // ".", "," or "auto" (comma if the outcome cells use it)
	Alpha     float64
	Seed      *uint64 // nil: a fresh random seed, written into the plan
	PValue    spec.PValueMethod
	Resamples int64
	PostHoc   spec.PostHoc
	Adjust    spec.Adjustment
	Control   string
}

// Draft writes the text of a new plan for a data file and checks it the way `rankplan
// check` would, so that it never hands out a plan that check refuses. Reading the data
// stops, with ctx's error, when ctx ends.
func Draft(ctx context.Context, o DraftOptions) ([]byte, error) {
	delim := o.Delimiter
	if delim == "" || delim == "auto" {
		d, err := sniffDelimiter(o.DataPath)
		if err != nil {
			return nil, &InputError{Err: err}
		}
		delim = d
	}
	d := spec.Draft{
		Delimiter: delim, Decimal: o.Decimal, Group: o.Group, Outcome: o.Outcome,
		Alpha: o.Alpha, PValue: o.PValue, Resamples: o.Resamples,
		PostHoc: o.PostHoc, Adjust: o.Adjust, Control: o.Control,
	}
	t, dec, err := loadForDraft(ctx, o, delim)
	if ctx.Err() != nil {
		return nil, fmt.Errorf("read %s: %w", o.DataPath, ctx.Err())
	}
	if err != nil {
		return nil, &InputError{Err: err}
	}
	d.Decimal = dec
	d.SHA256 = hex.EncodeToString(t.SHA256[:])
	counts := make([]int, len(t.Groups))
	for _, g := range t.Group {
		if g >= 0 {
			counts[g]++
		}
	}
	order := make([]int, len(t.Groups))
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int { return natsort.Compare(t.Groups[a], t.Groups[b]) })
	for i, g := range order {
		if i == 12 {
			d.GroupsFound = append(d.GroupsFound, fmt.Sprintf("… (%d in all)", len(order)))
			break
		}
		d.GroupsFound = append(d.GroupsFound, fmt.Sprintf("%s (%d rows)", strconv.Quote(t.Groups[g]), counts[g]))
	}

	if o.Seed != nil {
		d.Seed = *o.Seed
	} else {
		var b [8]byte
		if _, err := rand.Read(b[:]); err != nil {
			return nil, fmt.Errorf("draw a seed: %w", err)
		}
		d.Seed = binary.BigEndian.Uint64(b[:]) >> 11 // below 2^53: exact in every JSON reader
	}

	planName := o.PlanPath
	if planName == "" {
		planName = "plan.yaml"
	}
	d.DataFile, err = relativeData(o.DataPath, o.PlanPath)
	if err != nil {
		return nil, err
	}
	base := strings.TrimSuffix(filepath.Base(o.DataPath), filepath.Ext(o.DataPath))
	d.ID = identifier(base)
	d.Title = fmt.Sprintf("Kruskal-Wallis test of %s across %s groups (%s)", o.Outcome, o.Group, filepath.Base(o.DataPath))

	text := d.YAML()
	p, err := spec.Parse(planName, text)
	if err != nil {
		return nil, &InputError{Err: fmt.Errorf("the drafted plan would not be valid:\n%w", err)}
	}
	if o.PlanPath == "" {
		p.Dir = "."
	}
	if _, err := Prepare(ctx, p); err != nil {
		return nil, fmt.Errorf("the drafted plan would not run on %s:\n%w", o.DataPath, err)
	}
	return text, nil
}

// loadForDraft reads the data once to count groups and to tell the decimal separator.
func loadForDraft(ctx context.Context, o DraftOptions, delim string) (*data.Table, string, error) {
	opt := data.Options{
		Name: o.DataPath, Delimiter: delimByte(delim), GroupColumn: o.Group,
		OutcomeColumns: []string{o.Outcome}, MissingTokens: []string{"", "NA"},
	}
	decimals := []string{o.Decimal}
	if o.Decimal == "" || o.Decimal == "auto" {
		decimals = []string{"."}
		if delim != "," {
			decimals = append(decimals, ",")
		}
	}
	var first error
	for _, dec := range decimals {
		opt.Decimal = dec[0]
		t, err := data.LoadFile(ctx, o.DataPath, opt)
		if err == nil {
			return t, dec, nil
		}
		if first == nil {
			first = err
		}
		var de *data.Error
		if !errors.As(err, &de) || de.Field != o.Outcome {
			break // not a number problem: another separator will not help
		}
	}
	return nil, "", first
}

func delimByte(d string) byte {
	if d == "tab" {
		return '\t'
	}
	return d[0]
}

// sniffDelimiter picks the delimiter that occurs most often, outside quotes, in the first
// line of the file; a comma wins ties and a line with none.
// Only a regular file is read (see data.Open), and no more than one record's worth of it.
func sniffDelimiter(path string) (string, error) {
	f, _, err := data.Open(path, path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	line, err := bufio.NewReader(io.LimitReader(f, data.MaxRecordBytes)).ReadString('\n')
	if err != nil && line == "" {
		return "", &data.Error{File: path, Msg: "empty file"}
	}
	counts := map[byte]int{}
	quoted := false
	for i := 0; i < len(line); i++ {
		switch c := line[i]; {
		case c == '"':
			quoted = !quoted
		case !quoted && (c == ',' || c == ';' || c == '\t'):
			counts[c]++
		}
	}
	best, name := ',', ","
	for _, c := range []struct {
		b    byte
		name string
	}{{';', ";"}, {'\t', "tab"}} {
		if counts[c.b] > counts[byte(best)] {
			best, name = rune(c.b), c.name
		}
	}
	return name, nil
}

// relativeData writes the data path as the plan will hold it: relative to the folder the
// plan is written to (the current folder for standard output), with forward slashes.
func relativeData(dataPath, planPath string) (string, error) {
	planDir := "."
	if planPath != "" {
		planDir = filepath.Dir(planPath)
	}
	absData, err := filepath.Abs(dataPath)
	if err != nil {
		return "", err
	}
	absDir, err := filepath.Abs(planDir)
	if err != nil {
		return "", err
	}
	rel, err := filepath.Rel(absDir, absData)
	if err != nil {
		return filepath.ToSlash(absData), nil
	}
	return filepath.ToSlash(rel), nil
}

var notIDChar = regexp.MustCompile(`[^A-Za-z0-9._-]+`)

// identifier makes a plan id from a file name.
func identifier(s string) string {
	id := strings.Trim(notIDChar.ReplaceAllString(s, "-"), "-._")
	if id == "" {
		return "plan"
	}
	if len(id) > 100 {
		id = id[:100]
	}
	return id
}
