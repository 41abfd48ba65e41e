package specfile

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/units"
)

// Limits checked on the raw text before it is decoded. The TOML decoder's
// cost grows with the square of the nesting (a 16 KB file of nested inline
// tables took 0.9 GB and 14 s), so a file is measured first and refused at
// once when it cannot be a spec.
const (
	// MaxDepth is the deepest nesting of tables and arrays accepted: a
	// value inside an array inside a table ([search] kinds = ["cic"], or
	// search = {kinds = ["cic"]}) is at depth 2, the deepest the format
	// uses. Table headers, dotted keys, inline tables and arrays all count.
	// Two levels to spare let a mistake reach its own message.
	MaxDepth = 4
	// MaxItems bounds the keys, values and table headers of a file: the
	// format has 23 keys, and a spec that sets every one with the longest
	// lists has about 50 items.
	MaxItems = 256
)

// checkRaw measures text before it is decoded: its size, the nesting of its
// tables and arrays, the number of its items, and integers written in a base
// other than ten. Strings and comments are skipped as TOML reads them, so a
// "[" or "," inside them counts for nothing. The error names the limit and,
// where it applies, the line.
func checkRaw(file string, data []byte) error {
	if len(data) > MaxFileSize {
		return &Error{File: file, Rule: fmt.Sprintf("spec file is %d bytes, over the %s limit; a spec is a few hundred bytes", len(data), sizeText)}
	}
	r := rawScanner{data: data, line: 1}
	return r.run(file)
}

// rawScanner walks TOML text in three modes: at the start of a top-level
// line, in a key (up to its "="), and in a value.
type rawScanner struct {
	data   []byte
	i      int
	line   int
	items  int
	header int // depth of the current [table]'s contents
	// aot is set once a [[array.of.tables]] header is seen; from then on
	// every part of a header may be an array's element as well as a
	// table, and counts twice.
	aot bool
	// frames are the open arrays and inline tables of the current value,
	// each with the depth its contents sit at.
	frames []frame
	// key is the current key as written, with its header, for messages.
	section, key string
}

type frame struct {
	close byte // ']' or '}'
	depth int  // depth of the values inside
	entry int  // for '}': depth of the current entry's value (its key may be dotted)
}

// fail is an error at the current line.
func (r *rawScanner) fail(file, rule string) error {
	return &Error{File: file, Line: r.line, Rule: rule}
}

func (r *rawScanner) depthError(file string) error {
	return r.fail(file, fmt.Sprintf("tables and arrays nested deeper than %d levels; the spec format needs at most 2 (a list inside a table)", MaxDepth))
}

func (r *rawScanner) count(file string) error {
	r.items++
	if r.items > MaxItems {
		return r.fail(file, fmt.Sprintf("more than %d keys, values and tables; a full spec has about 50", MaxItems))
	}
	return nil
}

func (r *rawScanner) run(file string) error {
	for r.i < len(r.data) {
		r.skipBlank()
		if r.i >= len(r.data) {
			break
		}
		switch c := r.data[r.i]; c {
		case '\n':
			r.line++
			r.i++
		case '#':
			r.skipComment()
		case '[':
			if err := r.headerLine(file); err != nil {
				return err
			}
		default:
			if err := r.keyValue(file); err != nil {
				return err
			}
		}
	}
	return nil
}

func (r *rawScanner) skipBlank() {
	for r.i < len(r.data) && (r.data[r.i] == ' ' || r.data[r.i] == '\t' || r.data[r.i] == '\r') {
		r.i++
	}
}

func (r *rawScanner) skipComment() {
	for r.i < len(r.data) && r.data[r.i] != '\n' {
		r.i++
	}
}

// headerLine reads "[a.b]" or "[[a.b]]": the table's contents sit at the
// depth of its number of dotted parts (twice that, at most, with arrays of
// tables).
func (r *rawScanner) headerLine(file string) error {
	r.i++
	if r.i < len(r.data) && r.data[r.i] == '[' {
		r.aot = true
		r.i++
	}
	start := r.i
	parts, ok := r.keyPath(']')
	r.section = strings.TrimSpace(string(r.data[start:r.i]))
	if !ok {
		return nil // not valid TOML; the decoder stops here
	}
	r.header = parts
	if r.aot {
		r.header = 2 * parts
	}
	if r.header > MaxDepth {
		return r.depthError(file)
	}
	return r.count(file)
}

// keyPath reads a key up to stop ('=' or ']') and returns its number of
// dotted parts; ok is false when the line ends first.
func (r *rawScanner) keyPath(stop byte) (parts int, ok bool) {
	parts = 1
	for r.i < len(r.data) {
		switch c := r.data[r.i]; c {
		case stop:
			return parts, true
		case '\n':
			return parts, false
		case '.':
			parts++
			r.i++
		case '"', '\'':
			if !r.skipString(false) {
				return parts, false
			}
		default:
			r.i++
		}
	}
	return parts, false
}

// keyValue reads a top-level "key = value": a key of p dotted parts in a
// table whose contents sit at depth h puts its value at depth h+p-1.
func (r *rawScanner) keyValue(file string) error {
	r.frames = r.frames[:0]
	start := r.i
	parts, ok := r.keyPath('=')
	r.key = strings.TrimSpace(string(r.data[start:r.i]))
	if r.section != "" {
		r.key = r.section + "." + r.key
	}
	if !ok {
		return nil // not valid TOML; the decoder stops here
	}
	d := r.header + parts - 1
	if d > MaxDepth {
		return r.depthError(file)
	}
	if err := r.count(file); err != nil {
		return err
	}
	r.i++ // '='
	return r.value(file, d)
}

// value reads one top-level value at depth top, and everything nested in
// it, up to the newline that ends it outside any array or inline table.
func (r *rawScanner) value(file string, top int) error {
	// depth is that of a value written at the current position.
	depth := func() int {
		if len(r.frames) == 0 {
			return top
		}
		f := r.frames[len(r.frames)-1]
		if f.close == '}' {
			return f.entry
		}
		return f.depth
	}
	for r.i < len(r.data) {
		c := r.data[r.i]
		switch c {
		case ' ', '\t', '\r':
			r.i++
		case '\n':
			if len(r.frames) == 0 {
				return nil
			}
			r.line++
			r.i++
		case '#':
			r.skipComment()
		case '"', '\'':
			if !r.skipString(true) {
				return nil // not valid TOML; the decoder stops here
			}
		case '[', '{':
			inner := depth() + 1
			if inner > MaxDepth {
				return r.depthError(file)
			}
			f := frame{close: ']', depth: inner, entry: inner}
			if c == '{' {
				f.close = '}'
			}
			r.frames = append(r.frames, f)
			r.i++
			if c == '{' {
				if err := r.inlineKey(file); err != nil {
					return err
				}
			}
		case ']', '}':
			if len(r.frames) == 0 || r.frames[len(r.frames)-1].close != c {
				return nil // unbalanced: not valid TOML
			}
			r.frames = r.frames[:len(r.frames)-1]
			r.i++
		case ',':
			if err := r.count(file); err != nil {
				return err
			}
			r.i++
			if len(r.frames) > 0 && r.frames[len(r.frames)-1].close == '}' {
				if err := r.inlineKey(file); err != nil {
					return err
				}
			}
		default:
			if err := r.scalar(file); err != nil {
				return err
			}
		}
	}
	return nil
}

// inlineKey reads the key of an inline table's next entry, if there is one
// (the table may be empty or end after a trailing comma), and sets the
// depth of the entry's value.
func (r *rawScanner) inlineKey(file string) error {
	for r.i < len(r.data) {
		switch r.data[r.i] {
		case ' ', '\t', '\r':
			r.i++
		case '\n':
			r.line++
			r.i++
		case '#':
			r.skipComment()
		case '}':
			return nil
		default:
			f := &r.frames[len(r.frames)-1]
			parts, ok := r.keyPath('=')
			if !ok {
				return nil // not valid TOML; the decoder stops here
			}
			f.entry = f.depth + parts - 1
			if f.entry > MaxDepth {
				return r.depthError(file)
			}
			if err := r.count(file); err != nil {
				return err
			}
			r.i++ // '='
			return nil
		}
	}
	return nil
}

// scalar reads a bare value (a number, a boolean, a date) and refuses an
// integer written in hexadecimal, octal or binary.
func (r *rawScanner) scalar(file string) error {
	start := r.i
	for r.i < len(r.data) {
		c := r.data[r.i]
		if c == ',' || c == ']' || c == '}' || c == '#' || c == '\n' || c == ' ' || c == '\t' || c == '\r' || c == '"' || c == '\'' || c == '[' || c == '{' {
			break
		}
		r.i++
	}
	tok := string(r.data[start:r.i])
	if r.i == start {
		r.i++ // a byte that starts nothing: let the decoder judge it
		return nil
	}
	if len(tok) > 2 && tok[0] == '0' && strings.ContainsRune("xXoObB", rune(tok[1])) {
		base := map[byte]string{'x': "hexadecimal", 'o': "octal", 'b': "binary"}[tok[1]|0x20]
		rule := base + " integers are not accepted; write numbers in decimal"
		if v, err := strconv.ParseInt(strings.ReplaceAll(tok, "_", ""), 0, 64); err == nil {
			rule += fmt.Sprintf(" (%s is %d)", units.Clip(tok, 40), v)
		}
		e := r.fail(file, rule).(*Error)
		e.Key, e.Value = units.Clip(r.key, 60), units.Clip(tok, 60)
		return e
	}
	return nil
}

// skipString skips a string starting at r.i: basic (double quotes, with
// backslash escapes), literal (single quotes), and in values the multi-line
// forms of both (three quotes). It returns false when the string does not
// end (the decoder reports that).
func (r *rawScanner) skipString(multi bool) bool {
	q := r.data[r.i]
	if multi && r.i+2 < len(r.data) && r.data[r.i+1] == q && r.data[r.i+2] == q {
		r.i += 3
		for r.i < len(r.data) {
			c := r.data[r.i]
			switch {
			case c == '\\' && q == '"':
				r.i = min(r.i+2, len(r.data))
				continue
			case c == '\n':
				r.line++
			case c == q && r.i+2 < len(r.data) && r.data[r.i+1] == q && r.data[r.i+2] == q:
				r.i += 3
				// Up to two more quotes belong to the string.
				for n := 0; n < 2 && r.i < len(r.data) && r.data[r.i] == q; n++ {
					r.i++
				}
				return true
			}
			r.i++
		}
		return false
	}
	r.i++
	for r.i < len(r.data) {
		c := r.data[r.i]
		switch {
		case c == '\\' && q == '"':
			r.i = min(r.i+2, len(r.data))
			continue
		case c == '\n':
			return false
		case c == q:
			r.i++
			return true
		}
		r.i++
	}
	return false
}
