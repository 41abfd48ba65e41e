package signalio

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
)

// ReadFile reads the named file in the format Choose picks from
// opt.Format and the file's extension. The file's size is taken before
// anything is allocated, so a header that claims more than the file holds
// is refused without reading it; WAV and raw files are read in blocks,
// CSV a line at a time.
func ReadFile(path string, opt Options) (*Signal, Format, error) {
	return ReadFileContext(context.Background(), path, opt)
}

// ReadFileContext is ReadFile stopped by ctx: a CSV file's reading looks
// at it every few thousand lines (comment lines count), a WAV or raw
// file's before its samples; once ctx is done it returns an error wrapping
// ctx.Err(). A nil ctx is not allowed.
func ReadFileContext(ctx context.Context, path string, opt Options) (*Signal, Format, error) {
	f, err := Choose(path, opt.Format)
	if err != nil {
		return nil, Format{}, err
	}
	opt.Format = f
	// Checked before opening: a named pipe with no writer would block the
	// open (and with it Ctrl-C and --timeout).
	if st, err := os.Stat(path); err == nil && !st.Mode().IsRegular() {
		return nil, Format{}, fmt.Errorf("%s: not a regular file", path)
	}
	fh, err := os.Open(path)
	if err != nil {
		return nil, Format{}, fmt.Errorf("%s: cannot open: %v", path, unwrapPath(err))
	}
	defer fh.Close()
	st, err := fh.Stat()
	if err != nil {
		return nil, Format{}, fmt.Errorf("%s: %v", path, unwrapPath(err))
	}
	if !st.Mode().IsRegular() {
		return nil, Format{}, fmt.Errorf("%s: not a regular file", path)
	}
	return ReadContext(ctx, path, fh, st.Size(), opt)
}

// Read reads a signal in the format opt.Format.Kind, which must be
// stated, from r, which holds size bytes; name is used in messages.
func Read(name string, r io.ReaderAt, size int64, opt Options) (*Signal, Format, error) {
	return ReadContext(context.Background(), name, r, size, opt)
}

// ReadContext is Read stopped by ctx (see ReadFileContext).
func ReadContext(ctx context.Context, name string, r io.ReaderAt, size int64, opt Options) (*Signal, Format, error) {
	if err := ctx.Err(); err != nil {
		return nil, Format{}, stopped(name, err)
	}
	switch opt.Format.Kind {
	case WAV:
		return ReadWAV(name, r, size, opt)
	case Raw:
		return ReadRaw(name, r, size, opt)
	case CSV:
		return ReadCSVContext(ctx, name, io.NewSectionReader(r, 0, size), opt)
	}
	return nil, Format{}, fmt.Errorf("%s: format %s: state wav, raw or csv", display(name), opt.Format.Kind)
}

// unwrapPath drops the path from an *os.PathError, which the caller's
// message already names.
func unwrapPath(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}

// Encode writes s to w in format f: its Kind must be stated; a zero Bits
// takes s.Bits (which must then suit the kind); Channels, when stated,
// must match s. To write output in the input's format, pass the Format a
// reader returned, with Bits set to zero if the output's codes are wider.
// The bytes depend only on s and f.
func Encode(w io.Writer, s *Signal, f Format) error {
	if f.Channels != 0 && f.Channels != s.Channels() {
		return fmt.Errorf("output format %s: the signal has %d channels", f, s.Channels())
	}
	switch f.Kind {
	case WAV:
		return EncodeWAV(w, s, f.Bits)
	case Raw:
		return EncodeRaw(w, s, f.Bits)
	case CSV:
		if f.Bits == 0 {
			return EncodeCSV(w, s)
		}
		if err := checkFormat("output", f); err != nil {
			return err
		}
		if err := fits(s, f.Bits, fmt.Sprintf("CSV output of %d bits", f.Bits)); err != nil {
			return err
		}
		// The header states the width the reader will check against.
		t := *s
		t.Bits = f.Bits
		return EncodeCSV(w, &t)
	}
	return fmt.Errorf("output format %s: state wav, raw or csv", f.Kind)
}

// Marshal returns s encoded in format f (see Encode), for a caller that
// writes the file itself, atomically.
func Marshal(s *Signal, f Format) ([]byte, error) {
	var buf bytes.Buffer
	if err := Encode(&buf, s, f); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// stopped is the error of a read stopped by its context.
func stopped(name string, err error) error {
	return fmt.Errorf("%s: reading stopped: %w", display(name), err)
}
