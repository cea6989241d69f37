package spec

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"unicode/utf8"

	"gopkg.in/yaml.v3"

	"rankplan/internal/infile"
)

// Limits on plan files, checked before and while a plan is parsed so that a hostile or
// mistaken file is refused in milliseconds, with its position, instead of exhausting
// memory. A valid plan is a few kilobytes and nests five levels deep
// (analyses[0].subset.values), so the limits leave ample room. They are listed in the
// README's table of limits.
const (
	// MaxPlanBytes is the largest plan file: 256 KiB.
	MaxPlanBytes = 256 << 10
	// MaxPlanDepth is the deepest nesting of mappings and lists in a plan; the document's
	// top mapping is level 1.
	MaxPlanDepth = 16
)

// ReadFile reads the plan file at path. Only a regular file (after following symbolic
// links) of at most [MaxPlanBytes] is read; anything else, for example a named pipe
// that would wait for a writer, is refused at once. Errors are an [ErrorList] naming
// the file.
func ReadFile(path string) ([]byte, error) {
	f, size, err := infile.Open(path, math.MaxInt64)
	if err != nil {
		return nil, ErrorList{{File: path, Msg: "cannot open the plan file: " + err.Error(), Err: err}}
	}
	defer f.Close()
	src, err := io.ReadAll(io.LimitReader(f, MaxPlanBytes+1))
	if err != nil {
		return nil, ErrorList{{File: path, Msg: "cannot read the plan file: " + err.Error(), Err: err}}
	}
	if len(src) > MaxPlanBytes {
		return nil, ErrorList{sizeError(path, src, max(size, int64(len(src))))}
	}
	return src, nil
}

// sizeError is the error for a plan of size bytes, more than MaxPlanBytes, whose first
// MaxPlanBytes+1 bytes or more are head. It points at the line and column where the
// limit is passed.
func sizeError(file string, head []byte, size int64) *Error {
	line, col := position(head, MaxPlanBytes)
	return &Error{File: file, Line: line, Column: col, Path: "(top level)",
		Msg: fmt.Sprintf("the plan file has %d bytes, more than the limit of %d bytes (%s) for a plan; the limit is passed here",
			size, MaxPlanBytes, infile.Bytes(MaxPlanBytes))}
}

// position returns the line and column of byte offset off in src, counted from 1 as
// yaml.v3 counts them: a line ends at LF, CR LF, a lone CR, or U+0085, U+2028 or
// U+2029, and a column is one character (a valid UTF-8 sequence, or one byte of an
// invalid one).
func position(src []byte, off int) (line, col int) {
	line, col = 1, 1
	for i := 0; i < off && i < len(src); {
		c := src[i]
		switch {
		case c == '\n':
			line, col = line+1, 1
			i++
		case c == '\r':
			if i+1 < len(src) && src[i+1] == '\n' {
				i++
				continue
			}
			line, col = line+1, 1
			i++
		default:
			r, n := utf8.DecodeRune(src[i:])
			if r == 0x85 || r == 0x2028 || r == 0x2029 {
				line, col = line+1, 1
			} else {
				col++
			}
			i += n
		}
	}
	return line, col
}

// checkText refuses a plan whose bytes are not UTF-8 text that YAML accepts, at the line
// and column of the first offending byte: yaml.v3 itself reports such bytes without a
// position. A YAML stream may hold tab, LF, CR and the printable characters (YAML 1.2,
// §5.1: x20-x7E, x85, xA0-xD7FF, xE000-xFFFD, x10000-x10FFFF); a UTF-8 byte order mark
// may open the file.
func checkText(file string, src []byte) *Error {
	at := func(off int, format string, args ...any) *Error {
		line, col := position(src, off)
		return &Error{File: file, Line: line, Column: col, Path: "(syntax)", Msg: fmt.Sprintf(format, args...)}
	}
	if bytes.HasPrefix(src, []byte{0xFF, 0xFE}) || bytes.HasPrefix(src, []byte{0xFE, 0xFF}) {
		return at(0, "the file starts with a UTF-16 byte order mark; save the plan as UTF-8 text")
	}
	for i := 0; i < len(src); {
		r, n := utf8.DecodeRune(src[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			return at(i, "byte 0x%02X is not valid UTF-8; a plan is UTF-8 text", src[i])
		case r == '\t' || r == '\n' || r == '\r' || r >= 0x20 && r <= 0x7E || r == 0x85 ||
			r >= 0xA0 && r <= 0xD7FF || r >= 0xE000 && r <= 0xFFFD || r >= 0x10000:
		default:
			return at(i, "the control character %U is not allowed in a plan (YAML admits tab, line ends and printable characters only)", r)
		}
		i += n
	}
	return nil
}

// depthMsg is the one wording of the nesting limit, also for yaml.v3's own limit.
var depthMsg = fmt.Sprintf("mappings and lists nested more than %d levels deep, the limit for a plan (a valid plan needs 5)", MaxPlanDepth)

// depthError returns an error at the first mapping or list nested more than
// MaxPlanDepth levels deep under n (n at level depth), or nil. It looks at no more than
// MaxPlanDepth+1 levels, so it costs time in proportion to the file and no more.
func depthError(file string, n *yaml.Node, depth int, tokens []string, index []bool) *Error {
	if n.Kind != yaml.MappingNode && n.Kind != yaml.SequenceNode {
		return nil
	}
	if depth > MaxPlanDepth {
		return &Error{File: file, Line: n.Line, Column: n.Column,
			Path: displayPath(tokens, func(prefix []string) bool { return index[len(prefix)] }),
			Msg:  depthMsg}
	}
	if n.Kind == yaml.MappingNode {
		for i := 0; i+1 < len(n.Content); i += 2 {
			if e := depthError(file, n.Content[i+1], depth+1, append(tokens, n.Content[i].Value), append(index, false)); e != nil {
				return e
			}
		}
		return nil
	}
	for i, item := range n.Content {
		if e := depthError(file, item, depth+1, append(tokens, strconv.Itoa(i)), append(index, true)); e != nil {
			return e
		}
	}
	return nil
}
