package specfile

import (
	"bytes"
	"regexp"
	"strings"

	"github.com/stepdown-dsp/stepdown/chain/units"
)

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
	reDuplicate   = regexp.MustCompile(`^Key '(.*)' has already been defined\.?$`)
	reNumberUnit  = regexp.MustCompile(`^\s*([A-Za-z0-9_.\-]+)\s*=\s*([-+]?[0-9][0-9_.eE+\-]*\s*[A-Za-z/]+)\s*(?:#.*)?$`)
	reKeyOfLine   = regexp.MustCompile(`^\s*([A-Za-z0-9_.\-]+)\s*=`)
	reLineIsEmpty = regexp.MustCompile(`^\s*(?:#.*)?$`)
	reListOpen    = regexp.MustCompile(`^expected a comma \(','\) or array terminator \('\]'\), but got (.*)$`)
	reInlineOpen  = regexp.MustCompile(`^expected a comma or an inline table terminator '\}', but got (.*) instead$`)
	reOpensList   = regexp.MustCompile(`^\s*([A-Za-z0-9_.\-]+)\s*=\s*\[`)
	reOpensTable  = regexp.MustCompile(`^\s*([A-Za-z0-9_.\-]+)\s*=\s*\{`)
	reStartsItem  = regexp.MustCompile(`^\s*(?:[A-Za-z0-9_.\-]+\s*=|\[\[?[A-Za-z_][A-Za-z0-9_.\-]*\]\]?\s*(?:#.*)?$)`)
)

// tomlError is the spec-file error for the decoder's message msg at line
// (1-based; 0 when unknown) of data: the line of the slip, the key where
// one is known, and the rule in the spec's words.
func tomlError(file string, data []byte, line int, msg string) *Error {
	text := lineOf(data, line)
	key := ""
	if m := reKeyOfLine.FindStringSubmatch(text); m != nil {
		key = m[1]
	}
	e := &Error{File: file, Line: line}
	switch {
	case reTrailing.MatchString(msg):
		if m := reNumberUnit.FindStringSubmatch(text); m != nil {
			e.Key, e.Value = m[1], units.Clip(strings.TrimSpace(m[2]), units.MaxEcho)
			e.Rule = "a value with a unit goes in quotes: " + m[1] + ` = "` + e.Value + `"`
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
		e.Key, e.Rule = key, "nothing after =: give the value, e.g. "+orKey(key)+` = "600 kHz"`
	case reBareWord.MatchString(msg):
		w := units.Clip(reBareWord.FindStringSubmatch(msg)[1], units.MaxEcho)
		e.Key, e.Value, e.Rule = key, w, "words go in quotes: "+orKey(key)+` = "`+w+`"`
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
	case reDuplicate.MatchString(msg):
		e.Key = units.Clip(reDuplicate.FindStringSubmatch(msg)[1], units.MaxEcho)
		e.Rule = "given twice; give each key once"
	case reListOpen.MatchString(msg):
		// The decoder notices a list left open where the next item
		// starts (or at the end of the file): the slip is on the line
		// that opened it.
		start, k := openedOn(data, line, reOpensList)
		e.Key = k
		if got := reListOpen.FindStringSubmatch(msg)[1]; got == "end of file" || (line > start && reStartsItem.MatchString(text)) {
			e.Line, e.Rule = start, "the list is not closed: end it with ]"
			break
		}
		e.Rule = "items of a list are separated by commas: [a, b]"
	case reInlineOpen.MatchString(msg):
		start, k := openedOn(data, line, reOpensTable)
		e.Key = k
		if got := reInlineOpen.FindStringSubmatch(msg)[1]; got == "end of file" || got == `'\n'` || line > start {
			e.Line, e.Rule = start, "an inline table { ... } must end with } on its line"
			break
		}
		e.Rule = "entries of an inline table are separated by commas: { input = 16, output = 24 }"
	default:
		e.Rule = "not valid TOML: " + units.Clip(oneLine(msg), 2*units.MaxEcho)
	}
	return e
}

// openedOn is the line, at or before line, whose key = opens what opens
// matches (a list or an inline table), and its key; line and "" when none
// does.
func openedOn(data []byte, line int, opens *regexp.Regexp) (int, string) {
	for n := line; n >= 1; n-- {
		if m := opens.FindStringSubmatch(lineOf(data, n)); m != nil {
			return n, m[1]
		}
	}
	return line, ""
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
