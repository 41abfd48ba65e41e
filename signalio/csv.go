package signalio

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// maxLine is the longest CSV line read, in bytes: two 64-bit integers,
// spaces and a line end take under 50.
const maxLine = 4096

// ReadCSV reads a signal as text: one frame a line, one column (real) or
// two (I,Q) of decimal integers separated by a comma, with spaces around
// a value allowed. Lines whose first non-space character is '#' and blank
// lines are skipped. The first other line may be a header of names (no
// field of it a number, e.g. "i,q"); it sets the column count like a data
// line. Every line must have the first line's column count; every value
// must be an integer (no point, no exponent) within the two's complement
// range of opt.Format.Bits, which the caller states, as the rate in
// opt.RateHz. A UTF-8 byte order mark at the start is skipped, and lines
// may end in CRLF.
func ReadCSV(name string, r io.Reader, opt Options) (*Signal, Format, error) {
	return ReadCSVContext(context.Background(), name, r, opt)
}

// csvCheckLines is how many lines ReadCSVContext reads between looks at
// its context: a few milliseconds' worth.
const csvCheckLines = 1 << 12

// ReadCSVContext is ReadCSV stopped by ctx, which it looks at every
// csvCheckLines lines, comment and blank lines included (a file of
// comments alone is read as far as ctx allows); once ctx is done it returns
// an error wrapping ctx.Err().
func ReadCSVContext(ctx context.Context, name string, r io.Reader, opt Options) (*Signal, Format, error) {
	name = display(name)
	maxF, err := opt.maxFrames(name)
	if err != nil {
		return nil, Format{}, err
	}
	f := opt.Format
	f.Kind = CSV
	if f.Bits == 0 {
		return nil, Format{}, fmt.Errorf("%s: a CSV file does not record its word width: state the bits its values are held to", name)
	}
	if err := checkFormat(name, f); err != nil {
		return nil, Format{}, err
	}
	if err := checkRate(name, opt.RateHz); err != nil {
		return nil, Format{}, err
	}
	lo, hi := codeRange(f.Bits)

	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 512), maxLine)
	var (
		cols   int
		first  = true
		line   int
		frames int
		s      = &Signal{RateHz: opt.RateHz, Bits: f.Bits}
	)
	fail := func(format string, a ...any) (*Signal, Format, error) {
		return nil, Format{}, fmt.Errorf("%s line %d: "+format, append([]any{name, line}, a...)...)
	}
	for sc.Scan() {
		line++
		if line%csvCheckLines == 0 {
			if err := ctx.Err(); err != nil {
				return nil, Format{}, stopped(name, err)
			}
		}
		b := sc.Bytes()
		if line == 1 {
			b = bytes.TrimPrefix(b, []byte("\xEF\xBB\xBF"))
		}
		t := strings.TrimSpace(string(b))
		if t == "" || t[0] == '#' {
			continue
		}
		fields := strings.Split(t, ",")
		for i := range fields {
			fields[i] = strings.TrimSpace(fields[i])
		}
		if first {
			first = false
			cols = len(fields)
			if cols != 1 && cols != 2 {
				return fail("%d columns: want 1 (real) or 2 (I,Q)", cols)
			}
			if f.Channels != 0 && f.Channels != cols {
				return fail("%d columns but %d channels were stated", cols, f.Channels)
			}
			s.Samples = make([][]int64, cols)
			if isHeader(fields) {
				continue
			}
		}
		if len(fields) != cols {
			return fail("%d columns, but the first row has %d (every row must have the same)", len(fields), cols)
		}
		if frames == maxF {
			return nil, Format{}, fmt.Errorf("%s: more than %d samples per channel (line %d): more than this reader takes; cut the recording shorter", name, maxF, line)
		}
		for c, fld := range fields {
			v, err := strconv.ParseInt(fld, 10, 64)
			if err != nil {
				var ne *strconv.NumError
				if errors.As(err, &ne) && ne.Err == strconv.ErrRange {
					return fail("%q is outside %d-bit two's complement (%d to %d)", cut(fld), f.Bits, lo, hi)
				}
				if fld == "" {
					return fail("column %d is empty: want an integer", c+1)
				}
				return fail("%q is not an integer", cut(fld))
			}
			if v < lo || v > hi {
				return fail("%d is outside %d-bit two's complement (%d to %d)", v, f.Bits, lo, hi)
			}
			s.Samples[c] = append(s.Samples[c], v)
		}
		frames++
	}
	if err := sc.Err(); err != nil {
		line++
		if errors.Is(err, bufio.ErrTooLong) {
			return fail("longer than %d bytes: not a signal CSV", maxLine)
		}
		return nil, Format{}, fmt.Errorf("%s: reading: %v", name, err)
	}
	if frames == 0 {
		return nil, Format{}, fmt.Errorf("%s: no samples (only comments, blank lines or a header)", name)
	}
	f.Channels = cols
	return s, f, nil
}

// isHeader reports whether a first row is a header: none of its fields
// looks like a number (starts with a digit, a sign or a point).
func isHeader(fields []string) bool {
	for _, f := range fields {
		if f == "" || strings.ContainsRune("0123456789+-.", rune(f[0])) {
			return false
		}
	}
	return true
}

// EncodeCSV writes s as CSV: comment lines saying what the file is (the
// rate, the width, the channels, and that it is planning data), a header
// ("x" for one channel, "i,q" for two), then one frame a line, LF line
// ends. ReadCSV reads it back given the rate and bits.
func EncodeCSV(w io.Writer, s *Signal) error {
	if err := s.Check("signal"); err != nil {
		return err
	}
	bw := bufio.NewWriter(w)
	chans := "1 channel (real)"
	head := "x"
	if s.Channels() == 2 {
		chans, head = "2 channels (I,Q)", "i,q"
	}
	fmt.Fprintf(bw, "# stepdown signal: %s Hz, %d-bit two's complement codes, %s, %d samples per channel\n",
		strconv.FormatFloat(s.RateHz, 'g', -1, 64), s.Bits, chans, s.Frames())
	fmt.Fprintf(bw, "# %s\n", wavComment)
	fmt.Fprintf(bw, "%s\n", head)
	var buf []byte
	for k := range s.Frames() {
		buf = strconv.AppendInt(buf[:0], s.Samples[0][k], 10)
		if s.Channels() == 2 {
			buf = append(buf, ',')
			buf = strconv.AppendInt(buf, s.Samples[1][k], 10)
		}
		buf = append(buf, '\n')
		bw.Write(buf)
	}
	return bw.Flush()
}
