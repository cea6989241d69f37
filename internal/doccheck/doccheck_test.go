// Package doccheck holds tests of the contributor documentation against the code: the
// walkthroughs of DEVELOPERS.md ("Follow a run", "Follow a verify") may name only
// functions, types, methods and files that exist.
package doccheck

import (
	"go/ast"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// walkthroughs are the headings of the DEVELOPERS.md sections whose names are checked.
var walkthroughs = []string{"### Follow a run", "### Follow a verify"}

// minNames is the least number of Go names the walkthroughs must hold, so that a
// walkthrough emptied or renamed out of reach fails instead of passing with nothing checked.
const minNames = 40

var (
	backticked = regexp.MustCompile("`([^`\n]+)`")
	goName     = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_][A-Za-z0-9_]*){0,2}$`)
	goFile     = regexp.MustCompile(`^[A-Za-z0-9_./-]+\.go$`)
)

// index holds the declarations of the module: for each package name (several packages
// may share one, as every command's main does) its top-level names and, for each type,
// its methods.
type index struct {
	top     map[string]map[string]bool // package → top-level names
	methods map[string]map[string]bool // package → "Type.Method"
	all     map[string]bool            // every top-level name, any package
	typeMet map[string]bool            // every "Type.Method", any package
}

// moduleRoot is the folder of go.mod above the test's working folder.
func moduleRoot(t *testing.T) string {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Fatal("no go.mod above the test's folder")
		}
		dir = parent
	}
}

// buildIndex parses every non-test Go file of the module (folders named testdata, and
// hidden ones, are not part of it) and records its declarations.
func buildIndex(t *testing.T, root string) *index {
	t.Helper()
	ix := &index{top: map[string]map[string]bool{}, methods: map[string]map[string]bool{},
		all: map[string]bool{}, typeMet: map[string]bool{}}
	fset := token.NewFileSet()
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		name := d.Name()
		if d.IsDir() {
			if path != root && (name == "testdata" || strings.HasPrefix(name, ".")) {
				return filepath.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(name, ".go") || strings.HasSuffix(name, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(fset, path, nil, parser.SkipObjectResolution)
		if err != nil {
			return err
		}
		ix.add(f)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return ix
}

// add records the top-level declarations and methods of f.
func (ix *index) add(f *ast.File) {
	pkg := f.Name.Name
	if ix.top[pkg] == nil {
		ix.top[pkg], ix.methods[pkg] = map[string]bool{}, map[string]bool{}
	}
	top := func(name string) { ix.top[pkg][name], ix.all[name] = true, true }
	for _, decl := range f.Decls {
		switch d := decl.(type) {
		case *ast.FuncDecl:
			if d.Recv == nil || len(d.Recv.List) == 0 {
				top(d.Name.Name)
				continue
			}
			if recv := receiverType(d.Recv.List[0].Type); recv != "" {
				m := recv + "." + d.Name.Name
				ix.methods[pkg][m], ix.typeMet[m] = true, true
			}
		case *ast.GenDecl:
			for _, spec := range d.Specs {
				switch s := spec.(type) {
				case *ast.TypeSpec:
					top(s.Name.Name)
				case *ast.ValueSpec:
					for _, n := range s.Names {
						top(n.Name)
					}
				}
			}
		}
	}
}

// receiverType is the type name of a method's receiver: T, *T, T[P] and *T[P] all give T.
func receiverType(e ast.Expr) string {
	for {
		switch x := e.(type) {
		case *ast.StarExpr:
			e = x.X
		case *ast.IndexExpr:
			e = x.X
		case *ast.IndexListExpr:
			e = x.X
		case *ast.Ident:
			return x.Name
		default:
			return ""
		}
	}
}

// exists reports whether name, written as Name, pkg.Name, Type.Method or
// pkg.Type.Method, is declared in the module.
func (ix *index) exists(name string) bool {
	parts := strings.Split(name, ".")
	switch len(parts) {
	case 1:
		return ix.all[name]
	case 2:
		return ix.top[parts[0]][parts[1]] || ix.typeMet[name]
	case 3:
		return ix.top[parts[0]][parts[1]] && ix.methods[parts[0]][parts[1]+"."+parts[2]]
	}
	return false
}

// section returns the text of DEVELOPERS.md from the heading to the next heading of the
// same or a higher level, or "" when the heading is missing.
func section(doc, heading string) string {
	start := strings.Index(doc, "\n"+heading+"\n")
	if start < 0 {
		return ""
	}
	body := doc[start+len(heading)+2:]
	level := strings.Count(strings.Fields(heading)[0], "#")
	for i := 0; i < len(body); {
		end := strings.IndexByte(body[i:], '\n')
		line := body[i:]
		if end >= 0 {
			line = body[i : i+end]
		}
		if h := strings.Fields(line); len(h) > 0 && strings.Trim(h[0], "#") == "" && len(h[0]) <= level {
			return body[:i]
		}
		if end < 0 {
			break
		}
		i += end + 1
	}
	return body
}

// TestWalkthroughNamesExist checks that every backticked Go name in the walkthroughs of
// DEVELOPERS.md is declared in the module, and every backticked .go file exists.
func TestWalkthroughNamesExist(t *testing.T) {
	root := moduleRoot(t)
	b, err := os.ReadFile(filepath.Join(root, "DEVELOPERS.md"))
	if err != nil {
		t.Fatal(err)
	}
	ix := buildIndex(t, root)
	names := 0
	for _, h := range walkthroughs {
		text := section(string(b), h)
		if text == "" {
			t.Errorf("DEVELOPERS.md has no section %q", h)
			continue
		}
		for _, m := range backticked.FindAllStringSubmatch(text, -1) {
			tok := m[1]
			switch {
			case goName.MatchString(tok):
				names++
				if !ix.exists(tok) {
					t.Errorf("%s: `%s` is not declared anywhere in the module", h, tok)
				}
			case goFile.MatchString(tok):
				if _, err := os.Stat(filepath.Join(root, filepath.FromSlash(tok))); err != nil {
					t.Errorf("%s: file `%s` does not exist", h, tok)
				}
			}
		}
	}
	if names < minNames {
		t.Errorf("the walkthroughs name %d Go identifiers, want at least %d", names, minNames)
	}
}

// TestIndexResolves shows that the check can fail: correct names of each form resolve and
// misspelt ones, or ones in the wrong package, do not.
func TestIndexResolves(t *testing.T) {
	ix := buildIndex(t, moduleRoot(t))
	for _, tc := range []struct {
		name string
		want bool
	}{
		{"runner.Run", true},
		{"runner.bindInputs", true},
		{"folder.Writer.Finish", true},
		{"Writer.Finish", true},
		{"runner.Prepared.CheckWork", true},
		{"stats.KruskalWallisTest", true},
		{"Main", true},
		{"runner.Runn", false},                 // misspelt function
		{"folder.Writer.Finsh", false},         // misspelt method
		{"runner.Writer.Finish", false},        // right method, wrong package
		{"stats.Run", false},                   // right name, wrong package
		{"runner.WriteRunFolder", false},       // a name that was never there
		{"folder.Writer.KruskalWallis", false}, // a type's name as a method
		{"NoSuchFunction", false},
		{"a.b.c.d", false},
	} {
		if got := ix.exists(tc.name); got != tc.want {
			t.Errorf("exists(%q) = %v, want %v", tc.name, got, tc.want)
		}
	}
}

// TestSection: a section ends at the next heading of its level or above, not at a deeper one.
func TestSection(t *testing.T) {
	doc := "# T\n\n### A\none `x`\n#### deeper\ntwo\n### B\nthree\n## C\n"
	for _, tc := range []struct{ heading, want string }{
		{"### A", "one `x`\n#### deeper\ntwo\n"},
		{"### B", "three\n"},
		{"## C", ""},
		{"### Missing", ""},
	} {
		if got := section(doc, tc.heading); got != tc.want {
			t.Errorf("section(%q) = %q, want %q", tc.heading, got, tc.want)
		}
	}
}
