package browser

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"testing"
	"time"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"

	"rankplan/runner/report"
	"rankplan/runner/results"
)

// The papers a report must print on, in inches as Chromium takes them.
var papers = []struct {
	name string
	w, h float64
}{{"A4", 8.27, 11.69}, {"Letter", 8.5, 11}}

// TestReportPrintLength runs every example, prints its report.html to PDF in headless
// Chromium on A4 and on Letter, and counts the pages: at most two per analysis. It also
// checks that nothing that works only on screen (the links of the contents) is printed.
// The counts are logged (go test -v).
func TestReportPrintLength(t *testing.T) {
	longMode(t)
	exe := chromium(t)
	plans, err := filepath.Glob("../../../examples/*/plan.yaml")
	if err != nil || len(plans) == 0 {
		t.Fatalf("no example plans: %v", err)
	}
	bctx := offlineBrowser(t, exe)
	for _, plan := range plans {
		name := filepath.Base(filepath.Dir(plan))
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			dir, res := runExample(t, plan)
			analyses := len(res.Results.Analyses)
			ctx, cancel := chromedp.NewContext(bctx)
			defer cancel()
			ctx, cancel = context.WithTimeout(ctx, 60*time.Second)
			defer cancel()
			abs, _ := filepath.Abs(filepath.Join(dir, "report.html"))
			if err := chromedp.Do(ctx, chromedp.Navigate("file://"+abs), chromedp.WaitReady("body")); err != nil {
				t.Fatal(err)
			}
			counts := ""
			for _, paper := range papers {
				pdf, err := chromedp.Call(ctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: paper.w, PaperHeight: paper.h})
				if err != nil {
					t.Fatalf("print to PDF on %s: %v", paper.name, err)
				}
				pages, err := pdfPageCount(pdf.Data)
				if err != nil {
					t.Fatalf("PDF on %s: %v", paper.name, err)
				}
				if pages > 2*analyses {
					t.Errorf("%s: %d pages for %d analyses; at most %d", paper.name, pages, analyses, 2*analyses)
				}
				counts += fmt.Sprintf(", %s %d pages", paper.name, pages)
			}
			t.Logf("%s: analyses %d%s", name, analyses, counts)
			if _, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
				t.Fatal(err)
			}
			links, err := chromedp.Run(ctx, chromedp.Evaluate[int](`Array.from(document.querySelectorAll("a[href], nav")).filter(e => e.getClientRects().length > 0).length`))
			if err != nil {
				t.Fatal(err)
			}
			if links != 0 {
				t.Errorf("%d links or navigation blocks are printed", links)
			}
		})
	}
}

// offlineBrowser starts the browser exe with the network disabled as in
// TestReportInChromium (host names do not resolve, the proxy is a closed port) and returns
// its context; the browser is closed when the test and its subtests have finished.
func offlineBrowser(t *testing.T, exe string) context.Context {
	t.Helper()
	return startBrowser(t, exe)
}

// pdfObject finds the dictionary of indirect object "num gen obj … endobj" in an
// uncompressed part of a PDF (ISO 32000-1 §7.3.10).
func pdfObject(pdf []byte, num, gen string) ([]byte, error) {
	re := regexp.MustCompile(`(?s)(?:^|[^0-9])` + num + `\s+` + gen + `\s+obj\b(.*?)\bendobj\b`)
	m := re.FindSubmatch(pdf)
	if m == nil {
		return nil, fmt.Errorf("object %s %s not found", num, gen)
	}
	return m[1], nil
}

var (
	pdfRoot   = regexp.MustCompile(`/Root\s+([0-9]+)\s+([0-9]+)\s+R`)
	pdfPages  = regexp.MustCompile(`/Pages\s+([0-9]+)\s+([0-9]+)\s+R`)
	pdfCount  = regexp.MustCompile(`/Count\s+([0-9]+)`)
	pdfLeaf   = regexp.MustCompile(`/Type\s*/Page(?:[^A-Za-z0-9]|$)`)
	pdfHeader = []byte("%PDF-")
)

// pdfPageCount reads the number of pages of a PDF from its page tree (ISO 32000-1 §7.7):
// the trailer's /Root names the document catalog, whose /Pages names the root of the
// page tree, whose /Count is the number of leaf pages. It checks that number against the
// page objects (/Type /Page, not /Pages) found in the file, so that a count read from the
// wrong place, or pages hidden in compressed object streams, fail instead of passing.
func pdfPageCount(pdf []byte) (int, error) {
	if !bytes.HasPrefix(pdf, pdfHeader) {
		return 0, fmt.Errorf("not a PDF: %d bytes starting %q", len(pdf), pdf[:min(len(pdf), 8)])
	}
	roots := pdfRoot.FindAllSubmatch(pdf, -1)
	if len(roots) == 0 {
		return 0, fmt.Errorf("no /Root in the trailer")
	}
	root := roots[len(roots)-1] // the last trailer is the one in force (§7.5.6)
	catalog, err := pdfObject(pdf, string(root[1]), string(root[2]))
	if err != nil {
		return 0, fmt.Errorf("document catalog: %w", err)
	}
	ref := pdfPages.FindSubmatch(catalog)
	if ref == nil {
		return 0, fmt.Errorf("document catalog without /Pages")
	}
	tree, err := pdfObject(pdf, string(ref[1]), string(ref[2]))
	if err != nil {
		return 0, fmt.Errorf("page tree root: %w", err)
	}
	count := pdfCount.FindSubmatch(tree)
	if count == nil {
		return 0, fmt.Errorf("page tree root without /Count")
	}
	n, err := strconv.Atoi(string(count[1]))
	if err != nil {
		return 0, fmt.Errorf("page count: %w", err)
	}
	if leaves := len(pdfLeaf.FindAll(pdf, -1)); leaves != n {
		return 0, fmt.Errorf("the page tree counts %d pages, the file has %d page objects", n, leaves)
	}
	return n, nil
}

// TestPDFPageCount checks the page counter on small PDFs written by hand after the
// structure ISO 32000-1 gives (a minimal file as in its Annex H, and a page tree with an
// intermediate node) and on malformed ones. The section numbers cited in this file are
// recalled from memory of ISO 32000-1:2008.
func TestPDFPageCount(t *testing.T) {
	const minimal = "%PDF-1.4\n1 0 obj\n<< /Type /Catalog /Pages 2 0 R >>\nendobj\n" +
		"2 0 obj\n<< /Type /Pages /Kids [3 0 R] /Count 1 >>\nendobj\n" +
		"3 0 obj\n<< /Type /Page /Parent 2 0 R /MediaBox [0 0 612 792] >>\nendobj\n" +
		"trailer\n<< /Size 4 /Root 1 0 R >>\n%%EOF\n"
	// A root with one intermediate node of two pages and a page of its own: the root's
	// /Count is 3, the intermediate node's 2.
	const nested = "%PDF-1.7\n11 0 obj\n<</Type /Pages/Kids [12 0 R 15 0 R]/Count 3>>\nendobj\n" +
		"12 0 obj\n<</Type /Pages/Parent 11 0 R/Kids [13 0 R 14 0 R]/Count 2>>\nendobj\n" +
		"13 0 obj\n<</Type /Page/Parent 12 0 R>>\nendobj\n14 0 obj\n<</Type /Page/Parent 12 0 R>>\nendobj\n" +
		"15 0 obj\n<</Type /Page/Parent 11 0 R>>\nendobj\n" +
		"1 0 obj\n<</Type /Catalog/Pages 11 0 R>>\nendobj\n" +
		"trailer\n<</Size 16/Root 1 0 R/Info 2 0 R>>\n%%EOF\n"
	for _, tc := range []struct {
		name, pdf string
		want      int // 0: an error
	}{
		{"minimal", minimal, 1},
		{"nested", nested, 3},
		{"not a PDF", "<html>", 0},
		{"no trailer", "%PDF-1.4\n1 0 obj\n<< /Type /Page >>\nendobj\n", 0},
		{"count and pages disagree", minimal[:len(minimal)-len("trailer\n<< /Size 4 /Root 1 0 R >>\n%%EOF\n")] +
			"4 0 obj\n<< /Type /Page /Parent 2 0 R >>\nendobj\ntrailer\n<< /Size 5 /Root 1 0 R >>\n%%EOF\n", 0},
		{"catalog missing", "%PDF-1.4\ntrailer\n<< /Root 7 0 R >>\n", 0},
	} {
		got, err := pdfPageCount([]byte(tc.pdf))
		switch {
		case tc.want == 0 && err == nil:
			t.Errorf("%s: %d pages, want an error", tc.name, got)
		case tc.want != 0 && (err != nil || got != tc.want):
			t.Errorf("%s: %d pages (%v), want %d", tc.name, got, err, tc.want)
		}
	}
}

// TestLongPairsPrint prints a report whose one analysis compares ten groups (45 pairs, 4 of
// them found to differ, 1 not computable), made from the dissolution example's results:
// on screen the pairs table shows every pair, on paper only the 5 that differ or are not
// computable, and the whole report prints on at most two pages.
func TestLongPairsPrint(t *testing.T) {
	longMode(t)
	exe := chromium(t)
	b, err := os.ReadFile("../testdata/html/dissolution.results.json")
	if err != nil {
		t.Fatal(err)
	}
	var res results.Results
	if err := json.Unmarshal(b, &res); err != nil {
		t.Fatal(err)
	}
	a := &res.Analyses[0]
	proto, pair := a.Groups[0], a.PostHoc.Pairs[0]
	a.Groups, a.PostHoc.Pairs, a.PostHoc.Letters = nil, nil, nil
	for i := range 10 {
		g := proto
		g.Name = fmt.Sprintf("line %d", i+1)
		a.Groups = append(a.Groups, g)
	}
	for i := range a.Groups {
		for j := i + 1; j < len(a.Groups); j++ {
			p := pair
			p.Groups = [2]string{a.Groups[i].Name, a.Groups[j].Name}
			n := len(a.PostHoc.Pairs)
			p.Reject = n%11 == 0 // pairs 0, 11, 22, 33
			if n == 44 {
				p.NotComputable, p.Statistic, p.P, p.PAdjusted = "every value of the two groups is tied", nil, nil, nil
			}
			a.PostHoc.Pairs = append(a.PostHoc.Pairs, p)
		}
	}
	var html bytes.Buffer
	if err := report.HTML(&html, &res, report.Meta{}, nil); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "report.html")
	if err := os.WriteFile(path, html.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := chromedp.NewContext(offlineBrowser(t, exe))
	defer cancel()
	ctx, cancel = context.WithTimeout(ctx, 60*time.Second)
	defer cancel()
	if err := chromedp.Do(ctx, chromedp.Navigate("file://"+path), chromedp.WaitReady("body")); err != nil {
		t.Fatal(err)
	}
	const rowsJS = `Array.from(document.querySelectorAll("section.pairs tbody tr")).filter(e => e.getClientRects().length > 0).length`
	screen, err := chromedp.Run(ctx, chromedp.Evaluate[int](rowsJS))
	if err != nil {
		t.Fatal(err)
	}
	for _, paper := range papers {
		pdf, err := chromedp.Call(ctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: paper.w, PaperHeight: paper.h})
		if err != nil {
			t.Fatalf("print to PDF on %s: %v", paper.name, err)
		}
		n, err := pdfPageCount(pdf.Data)
		if err != nil || n > 2 {
			t.Errorf("%s: %d pages (%v), at most 2", paper.name, n, err)
		}
		t.Logf("%s: %d pages", paper.name, n)
	}
	if _, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
		t.Fatal(err)
	}
	paper, err := chromedp.Run(ctx, chromedp.Evaluate[int](rowsJS))
	if err != nil {
		t.Fatal(err)
	}
	if screen != 45 || paper != 5 {
		t.Errorf("pairs shown: %d on screen, %d on paper; want 45 and 5", screen, paper)
	}
}
