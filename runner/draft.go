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
	// DataPath is an existing CSV file, as the user named it (a header without rows will
	// do); "" when the data do not exist yet, and ExpectPath says where they will be.
	DataPath string
	// ExpectPath is where the data file will be, with DataPath "".
	ExpectPath string
	// Columns are the declared columns of the data to come (with ExpectPath), for the
	// plan's comments, e.g. `"dose" (text)`; nil when only Group and Outcome are declared.
	Columns   []string
	PlanPath  string // where the plan will be written; "" for standard output
	Group     string
	Outcome   string
	Unit      string   // the outcome's unit, for report labels; "" for none
	Delimiter string   // ",", ";", "tab" or "auto" (sniffed from the header line; "," without a file)
	Decimal   string   // ".", "," or "auto" (comma if the outcome cells use it; "." without rows)
	Missing   []string // the missing-value tokens; nil: the plan format's default
	Groups    []string // the groups to analyse, in report order; nil: every group found
	Alpha     float64
	Seed      *uint64 // nil: a fresh random seed, written into the plan
	PValue    spec.PValueMethod
	Resamples int64
	// EffectResamples > 0 asks for a bootstrap interval of the effect size with this many
	// resamples.
	EffectResamples int64
	PostHoc         spec.PostHoc
	Adjust          spec.Adjustment
	Control         string
}

// Drafted is a drafted plan: its text, and what was seen of the data.
type Drafted struct {
	Text   []byte
	Source spec.DraftSource
}

// Draft writes the text of a new plan and checks it the way `rankplan check` would, so
// that it never hands out a plan that check refuses:
//
//   - from a data file with rows (DataPath): the plan is parsed and prepared against the
//     data, and the file's SHA-256 is offered as a commented pin;
//   - from a data file with a header and no rows: the columns are checked, the plan is
//     parsed, and the groups come from o.Groups or from the data when they arrive;
//   - from a declared layout (ExpectPath, no file read): the plan is parsed.
//
// Reading the data stops, with ctx's error, when ctx ends.
func Draft(ctx context.Context, o DraftOptions) (Drafted, error) {
	if (o.DataPath == "") == (o.ExpectPath == "") {
		return Drafted{}, &InputError{Err: errors.New("draft a plan: name either an existing data file or the path the data will have, not both")}
	}
	d := spec.Draft{
		Delimiter: o.Delimiter, Decimal: o.Decimal, Group: o.Group, Outcome: o.Outcome, Unit: o.Unit,
		Missing: o.Missing, Groups: o.Groups, Columns: o.Columns,
		Alpha: o.Alpha, PValue: o.PValue, Resamples: o.Resamples, EffectResamples: o.EffectResamples,
		PostHoc: o.PostHoc, Adjust: o.Adjust, Control: o.Control,
	}
	dataPath := o.DataPath
	if dataPath != "" {
		if err := draftFromFile(ctx, o, &d); err != nil {
			return Drafted{}, err
		}
	} else {
		dataPath = o.ExpectPath
		d.Source = spec.DraftFromLayout
		d.Delimiter, d.Decimal = layoutSeparators(o.Delimiter, o.Decimal)
	}

	if o.Seed != nil {
		d.Seed = *o.Seed
	} else {
		var b [8]byte
		if _, err := rand.Read(b[:]); err != nil {
			return Drafted{}, fmt.Errorf("draw a seed: %w", err)
		}
		d.Seed = binary.BigEndian.Uint64(b[:]) >> 11 // below 2^53: exact in every JSON reader
	}

	planName := o.PlanPath
	if planName == "" {
		planName = "plan.yaml"
	}
	var err error
	d.DataFile, err = relativeData(dataPath, o.PlanPath)
	if err != nil {
		return Drafted{}, err
	}
	base := strings.TrimSuffix(filepath.Base(dataPath), filepath.Ext(dataPath))
	d.ID = identifier(base)
	d.Title = fmt.Sprintf("Kruskal-Wallis test of %s across %s groups (%s)", o.Outcome, o.Group, filepath.Base(dataPath))

	text := d.YAML()
	p, err := spec.Parse(planName, text)
	if err != nil {
		return Drafted{}, &InputError{Err: fmt.Errorf("the drafted plan would not be valid:\n%w", err)}
	}
	if o.PlanPath == "" {
		p.Dir = "."
	}
	if d.Source == spec.DraftFromData {
		if _, err := Prepare(ctx, p); err != nil {
			return Drafted{}, fmt.Errorf("the drafted plan would not run on %s:\n%w", o.DataPath, err)
		}
	}
	return Drafted{Text: text, Source: d.Source}, nil
}

// layoutSeparators chooses the delimiter and decimal mark of data that init has not
// seen: "auto" becomes "," and ".", or ";" for the delimiter when the decimal mark is a
// comma (a comma cannot be both).
func layoutSeparators(delim, dec string) (string, string) {
	if dec == "" || dec == "auto" {
		dec = "."
	}
	if delim == "" || delim == "auto" {
		delim = ","
		if dec == "," {
			delim = ";"
		}
	}
	return delim, dec
}

// draftFromFile fills what the data file tells: its delimiter, decimal mark, groups and
// SHA-256, or only its columns when it holds no rows.
func draftFromFile(ctx context.Context, o DraftOptions, d *spec.Draft) error {
	delim := o.Delimiter
	if delim == "" || delim == "auto" {
		s, err := sniffDelimiter(o.DataPath)
		if err != nil {
			return &InputError{Err: err}
		}
		delim = s
	}
	d.Delimiter = delim
	t, dec, err := loadForDraft(ctx, o, delim)
	if ctx.Err() != nil {
		return fmt.Errorf("read %s: %w", o.DataPath, ctx.Err())
	}
	if errors.Is(err, data.ErrNoRows) {
		d.Source = spec.DraftFromHeader
		_, d.Decimal = layoutSeparators(delim, o.Decimal)
		return nil
	}
	if err != nil {
		return &InputError{Err: err}
	}
	d.Source = spec.DraftFromData
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
	return nil
}

// loadForDraft reads the data to count groups and to tell the decimal mark, with the
// missing-value tokens the plan will have, so that a token such as "n/a" is not taken
// for a number in the wrong notation. With the decimal mark "auto" each candidate is
// tried in turn while the outcome column is what fails; when every one fails, the error
// reported is the one found furthest into the file (the first on a tie): the notation
// that read the most rows is the file's, and that cell is the one in the way. A cell
// that cannot be read as a number also names the tokens in force and the --missing
// flag of init.
func loadForDraft(ctx context.Context, o DraftOptions, delim string) (*data.Table, string, error) {
	missing := o.Missing
	if missing == nil {
		missing = spec.DefaultMissingTokens()
	}
	opt := data.Options{
		Name: o.DataPath, Delimiter: delimByte(delim), GroupColumn: o.Group,
		OutcomeColumns: []string{o.Outcome}, MissingTokens: missing,
	}
	decimals := []string{o.Decimal}
	if o.Decimal == "" || o.Decimal == "auto" {
		decimals = []string{"."}
		if delim != "," {
			decimals = append(decimals, ",")
		}
	}
	var (
		worst   error
		worstAt *data.Error
	)
	for _, dec := range decimals {
		opt.Decimal = dec[0]
		t, err := data.LoadFile(ctx, o.DataPath, opt)
		if err == nil {
			return t, dec, nil
		}
		var de *data.Error
		if !errors.As(err, &de) {
			return nil, "", err // the file could not be read
		}
		if worstAt == nil || de.Line > worstAt.Line {
			worst, worstAt = err, de
		}
		if de.Field != o.Outcome {
			break // not a number problem: another decimal mark will not help
		}
	}
	if errors.Is(worst, strconv.ErrSyntax) {
		quoted := make([]string, len(missing))
		for i, m := range missing {
			quoted[i] = strconv.Quote(m)
		}
		worst = fmt.Errorf("%w; if that text marks a missing value, list it with --missing (the missing-value tokens now: %s)",
			worst, strings.Join(quoted, ", "))
	}
	return nil, "", worst
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
