package specfile

import (
	"bytes"
	"regexp"
	"strconv"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/units"
)

// keyPat is a TOML key: bare words (letters, digits, _ and -) or quoted
// ones, joined by dots; plainKey names it as the messages do.
const keyPat = `(?:"[^"\n]*"|'[^'\n]*'|[A-Za-z0-9_\-]+)(?:\s*\.\s*(?:"[^"\n]*"|'[^'\n]*'|[A-Za-z0-9_\-]+))*`

// The TOML decoder's messages for the slips a spec's author makes most,
// said in the spec's words by tomlError. Any other message is passed on
// after "not valid TOML: ".
var (
	reTrailing    = regexp.MustCompile(`^expected a top-level item to end with a newline, comment, or EOF, but got '(.*)' instead`)
	reNoEquals    = regexp.MustCompile(`^expected '\.' or '=', but got '(.*)' instead`)
	reNoValue     = regexp.MustCompile(`^expected value but found '\\n' instead`)
	reBareWord    = regexp.MustCompile(`^expected value but found "(.*)" instead`)
	reDoubleEq    = regexp.MustCompile(`^expected value but found '=' instead`)
	reBlankKey    = regexp.MustCompile(`^unexpected '=': key name appears blank`)
	reHeaderOpen  = regexp.MustCompile(`^(?:expected '\.' or '\]' to end table name|expected end of table array name delimiter '\]'), but got '(.*)' instead`)
	reStringOpen  = regexp.MustCompile(`^strings cannot contain newlines`)
	reLeadingDot  = regexp.MustCompile(`^floats must start with a digit, not '\.'`)
	reLeadZero    = regexp.MustCompile(`^Invalid (integer|float) "([^"]*)": cannot have leading zeroes`)
	reControl     = regexp.MustCompile(`cannot contain control characters: '0x([0-9a-fA-F]+)'`)
	reDuplicate   = regexp.MustCompile(`^Key '(.*)' has already been defined\.?$`)
	reNumberUnit  = regexp.MustCompile(`^\s*(` + keyPat + `)\s*=\s*([-+]?[0-9][0-9_.eE+\-]*\s*[A-Za-z/]+)\s*(?:#.*)?$`)
	reKeyOfLine   = regexp.MustCompile(`^\s*(` + keyPat + `)\s*=`)
	reLineIsEmpty = regexp.MustCompile(`^\s*(?:#.*)?$`)
	reListOpen    = regexp.MustCompile(`^expected a comma \(','\) or array terminator \('\]'\), but got (.*)$`)
	reInlineOpen  = regexp.MustCompile(`^expected a comma or an inline table terminator '\}', but got (.*) instead$`)
	reHeader      = regexp.MustCompile(`^\s*\[\[?\s*(` + keyPat + `)\s*\]\]?\s*(?:#.*)?$`)
	reStartsItem  = regexp.MustCompile(`^\s*(?:` + keyPat + `\s*=|\[\[?\s*` + keyPat + `\s*\]\]?\s*(?:#.*)?$)`)
)

// tomlError is the spec-file error for the decoder's message msg at line
// (1-based; 0 when unknown) of data: the line of the slip, the key where
// one is known, and the rule in the spec's words.
func tomlError(file string, data []byte, line int, msg string) *Error {
	text := lineOf(data, line)
	key := ""
	if m := reKeyOfLine.FindStringSubmatch(text); m != nil {
		key = plainKey(m[1])
	}
	e := &Error{File: file, Line: line}
	// A list or inline table still open where a new key or table header
	// begins (or the file ends) is the slip, whatever the decoder then
	// stumbled on: a word it took for a value, a comma it wanted.
	at := line
	if strings.Contains(msg, "unexpected EOF") || strings.Contains(msg, "got end of file") {
		at = bytes.Count(data, []byte("\n")) + 2 // past the last line
	}
	if start, k, closer := openAt(data, at); start > 0 && (at != line || text == "" || reStartsItem.MatchString(text)) {
		e.Line, e.Key = start, inTable(data, start, k)
		if closer == '}' {
			e.Rule = "an inline table { ... } must end with } on its line"
		} else {
			e.Rule = "the list is not closed: end it with ]"
		}
		return e
	}
	bare := key // as the line writes it, for the examples
	if key != "" {
		key = inTable(data, line, key)
	}
	switch {
	case reTrailing.MatchString(msg):
		if m := reNumberUnit.FindStringSubmatch(text); m != nil {
			k := plainKey(m[1])
			e.Key, e.Value = inTable(data, line, k), units.Clip(strings.TrimSpace(m[2]), units.MaxEcho)
			e.Rule = "a value with a unit goes in quotes: " + k + ` = "` + e.Value + `"`
			return e
		}
		e.Key, e.Rule = key, "only a comment (# ...) may follow a value or a [table] header on its line; a value with spaces or a unit goes in quotes"
	case reNoEquals.MatchString(msg):
		if m := reNoEquals.FindStringSubmatch(msg); m[1] == `\n` {
			e.Rule = "a key with no value: write key = value, e.g. passband = \"600 kHz\""
		} else {
			e.Rule = "a key is one word (letters, digits, _ and -) followed by = and its value"
		}
	case reNoValue.MatchString(msg):
		ex, _ := exampleOf(key)
		e.Key, e.Rule = key, "nothing after =: give the value, e.g. "+orKey(bare)+" = "+ex
	case reBareWord.MatchString(msg):
		w := units.Clip(reBareWord.FindStringSubmatch(msg)[1], units.MaxEcho)
		e.Key, e.Value, e.Rule = key, w, bareWordRule(bare, key, w)
		start, _, closer := openAt(data, line+1)
		if i := strings.Index(text, w); (start > 0 && closer == ']') || (i > 0 && strings.Contains(text[:i], "[")) {
			e.Rule = `words go in quotes, in a list too: ["` + w + `", ...]`
		}
	case reDoubleEq.MatchString(msg):
		e.Key, e.Rule = key, "one = between a key and its value"
	case reBlankKey.MatchString(msg):
		e.Rule = "a value with no key before its ="
	case reHeaderOpen.MatchString(msg):
		// The decoder reports the line after the header when the header
		// runs into its line's end.
		if reHeaderOpen.FindStringSubmatch(msg)[1] == `\n` && line > 1 {
			e.Line = line - 1
		}
		e.Rule = "a table header such as [words] must end with ] on its line"
	case reStringOpen.MatchString(msg):
		e.Key, e.Rule = key, "a quoted value must end with its closing quote on the same line"
	case reLeadingDot.MatchString(msg):
		e.Key, e.Rule = key, "a number starts with a digit: write 0.1, not .1"
	case reLeadZero.MatchString(msg):
		m := reLeadZero.FindStringSubmatch(msg)
		e.Key, e.Rule = key, "a number has no leading zeros"
		if w, ok := withoutLeadingZeros(m[1] == "float", m[2]); ok {
			e.Rule += ": write " + w
		}
	case reControl.MatchString(msg):
		if c := reControl.FindStringSubmatch(msg)[1]; (c == "0d" || c == "0D") && !bytes.Contains(data, []byte("\n")) {
			e.Rule = "a carriage return with no line feed after it (old Mac line ends): save the file with LF or CRLF line ends"
		} else if c == "0d" || c == "0D" {
			e.Rule = "a carriage return (code 0x0d) with no line feed after it, in the text: remove it"
		} else {
			e.Rule = "a control character (code 0x" + c + ") in the text: remove it"
		}
	case reDuplicate.MatchString(msg):
		e.Key = units.Clip(reDuplicate.FindStringSubmatch(msg)[1], units.MaxEcho)
		e.Rule = "given twice; give each key once"
	case reListOpen.MatchString(msg):
		// Items on the line of the slip (a list left open is found
		// above, by openAt).
		e.Key = key
		if start, k, _ := openAt(data, line+1); start > 0 {
			e.Key = inTable(data, start, k)
		}
		e.Rule = "items of a list are separated by commas: [a, b]"
		// A list over several lines: the comma is missing at the end of
		// the item line before this one.
		if start, k, _ := openAt(data, line); start > 0 {
			e.Key = inTable(data, start, k)
			for n := line - 1; n >= start; n-- {
				t := strings.TrimSpace(stripComment(lineOf(data, n)))
				if t == "" {
					continue
				}
				if !strings.HasSuffix(t, ",") && !strings.HasSuffix(t, "[") {
					e.Line, e.Rule = n, "items of a list are separated by commas: end this line with one"
				}
				break
			}
		}
	case reInlineOpen.MatchString(msg):
		e.Key = key
		if start, k, _ := openAt(data, line+1); start > 0 {
			e.Key = inTable(data, start, k)
		}
		if got := reInlineOpen.FindStringSubmatch(msg)[1]; got == "end of file" || got == `'\n'` {
			e.Rule = "an inline table { ... } must end with } on its line"
			break
		}
		e.Rule = "entries of an inline table are separated by commas: { input = 16, output = 24 }"
	default:
		e.Rule = "not valid TOML: " + units.Clip(oneLine(msg), 2*units.MaxEcho)
	}
	return e
}

// openAt scans data's lines before line (1-based) for a list or inline
// table still open at its start: the line that opened the outermost one,
// the key it was given to, and the bracket that would close it (0 when
// none is open). Quoted strings and comments are skipped; a line that
// begins with [ where nothing is open is a table header.
func openAt(data []byte, line int) (start int, key string, closer byte) {
	type open struct {
		line  int
		key   string
		close byte
	}
	var stack []open
	for n := 1; n < line; n++ {
		text := lineOf(data, n)
		if len(stack) == 0 && strings.HasPrefix(strings.TrimSpace(text), "[") {
			continue // a table header
		}
		k := ""
		if m := reKeyOfLine.FindStringSubmatch(text); m != nil && len(stack) == 0 {
			k = plainKey(m[1])
		}
		for i := 0; i < len(text); i++ {
			switch c := text[i]; c {
			case '#':
				i = len(text)
			case '"', '\'':
				// Skip to the closing quote (a basic string's escapes too).
				for i++; i < len(text) && text[i] != c; i++ {
					if c == '"' && text[i] == '\\' {
						i++
					}
				}
			case '[', '{':
				cl := byte(']')
				if c == '{' {
					cl = '}'
				}
				stack = append(stack, open{n, k, cl})
			case ']', '}':
				if len(stack) > 0 {
					stack = stack[:len(stack)-1]
				}
			}
		}
	}
	if len(stack) == 0 {
		return 0, "", 0
	}
	return stack[0].line, stack[0].key, stack[0].close
}

// stripComment is line without its comment (a # outside quotes).
func stripComment(line string) string {
	for i := 0; i < len(line); i++ {
		switch c := line[i]; c {
		case '#':
			return line[:i]
		case '"', '\'':
			for i++; i < len(line) && line[i] != c; i++ {
				if c == '"' && line[i] == '\\' {
					i++
				}
			}
		}
	}
	return line
}

// inTable is key as the spec's documentation names it: prefixed by the
// [table] header above line, if any ("search.kinds" for kinds under
// [search]).
func inTable(data []byte, line int, key string) string {
	if key == "" || strings.Contains(key, ".") {
		return key
	}
	for n := line - 1; n >= 1; n-- {
		if m := reHeader.FindStringSubmatch(lineOf(data, n)); m != nil {
			return plainKey(m[1]) + "." + key
		}
	}
	return key
}

// bareWordRule is the rule for the word w written bare after the key
// (dotted: key; as its line writes it: bare): true and false in lower
// case, no empty value in TOML, and otherwise the value the key takes:
// text in quotes (in the case the key accepts, for signal), or a quantity
// or number like the key's example.
func bareWordRule(bare, key, w string) string {
	lw := strings.ToLower(w)
	ex, knownKey := exampleOf(key)
	switch {
	case (ex == "true" || ex == "false") && (lw == "true" || lw == "false"):
		return "true and false are written in lower case, without quotes: " + orKey(bare) + " = " + lw
	case (ex == "true" || ex == "false") && (lw == "yes" || lw == "no" || lw == "on" || lw == "off"):
		return "a switch is true or false, in lower case, without quotes: " + orKey(bare) + " = true"
	case lw == "null" || lw == "none" || lw == "nil" || lw == "empty":
		return "a value cannot be left empty: give one, such as " + orKey(bare) + " = " + ex
	case key == "words.coefficients" && lw == "auto":
		r := "words go in quotes"
		if w != lw {
			r += ", in lower case"
		}
		return r + ": " + orKey(bare) + ` = "auto"`
	}
	if key == "signal" {
		if lw == "real" || lw == "complex" {
			r := "words go in quotes"
			if w != lw {
				r += ", in lower case"
			}
			return r + ": " + orKey(bare) + ` = "` + lw + `"`
		}
		return `want "real" or "complex", in quotes`
	}
	if knownKey && (!strings.HasPrefix(ex, `"`) || strings.ContainsAny(ex, "0123456789")) {
		return "want a value such as " + orKey(bare) + " = " + ex
	}
	return "words go in quotes: " + orKey(bare) + ` = "` + w + `"`
}

// plainKey is a key as keyPat matched it, as the messages name it
// (shownKey): kinds for "kinds", search.kinds for search . "kinds", and
// "pass band" in its quotes.
func plainKey(k string) string {
	var parts []string
	var b strings.Builder
	for i := 0; i < len(k); i++ {
		switch c := k[i]; c {
		case '"', '\'':
			j := strings.IndexByte(k[i+1:], c)
			if j < 0 {
				j = len(k) - i - 1
			}
			b.WriteString(k[i+1 : i+1+j])
			i += j + 1
		case '.':
			parts = append(parts, b.String())
			b.Reset()
		case ' ', '\t':
		default:
			b.WriteByte(c)
		}
	}
	return shownKey(append(parts, b.String()))
}

// orKey is key, or "key" when the line named none.
func orKey(key string) string {
	if key == "" {
		return "key"
	}
	return key
}

// lineOf is line n (1-based) of data, cut to a readable length; "" when
// there is none or it is blank.
func lineOf(data []byte, n int) string {
	if n < 1 {
		return ""
	}
	for i := 1; i < n; i++ {
		j := bytes.IndexByte(data, '\n')
		if j < 0 {
			return ""
		}
		data = data[j+1:]
	}
	if j := bytes.IndexByte(data, '\n'); j >= 0 {
		data = data[:j]
	}
	s := string(data[:min(len(data), 4*units.MaxEcho)])
	if reLineIsEmpty.MatchString(s) {
		return ""
	}
	return s
}

// withoutLeadingZeros writes the number text (TOML's, underscores between
// digits allowed) as the decoder would take it, without leading zeros:
// "014" as 14, "00_5" as 5, "-007" as -7, "01.5" as 1.5, "01e2" as 100.
func withoutLeadingZeros(float bool, text string) (string, bool) {
	t := strings.ReplaceAll(text, "_", "")
	if float {
		v, err := strconv.ParseFloat(t, 64)
		if err != nil {
			return "", false
		}
		return strconv.FormatFloat(v, 'g', -1, 64), true
	}
	v, err := strconv.ParseInt(t, 10, 64)
	if err != nil {
		return "", false
	}
	return strconv.FormatInt(v, 10), true
}
