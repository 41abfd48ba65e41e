package signalio

import (
	"fmt"
	"io"
)

// ReadRaw reads headerless interleaved little-endian integers from r,
// which holds size bytes: opt.Format.Bits 16 (int16) or 32 (int32),
// opt.Format.Channels 1 or 2 (zero means 1), and opt.RateHz the sample
// rate, all stated by the caller. A size that is not a whole number of
// frames is an error, and so is an empty file.
func ReadRaw(name string, r io.ReaderAt, size int64, opt Options) (*Signal, Format, error) {
	name = display(name)
	maxF, err := opt.maxFrames(name)
	if err != nil {
		return nil, Format{}, err
	}
	f := opt.Format
	f.Kind = Raw
	if f.Channels == 0 {
		f.Channels = 1
	}
	if f.Bits == 0 {
		return nil, Format{}, fmt.Errorf("%s: a raw file has no header: state its sample type, int16 or int32", name)
	}
	if err := checkFormat(name, f); err != nil {
		return nil, Format{}, err
	}
	if err := checkRate(name, opt.RateHz); err != nil {
		return nil, Format{}, err
	}
	frame := int64(f.Channels * f.Bits / 8)
	switch {
	case size == 0:
		return nil, Format{}, fmt.Errorf("%s: the file is empty (no samples)", name)
	case size%frame != 0:
		return nil, Format{}, fmt.Errorf("%s: %d bytes is not a whole number of %d-byte frames (%s)", name, size, frame, f)
	case size/frame > int64(maxF):
		return nil, Format{}, tooLong(name, size/frame, maxF)
	}
	s := &Signal{RateHz: opt.RateHz, Bits: f.Bits}
	if err := readInterleaved(name, s, r, 0, int(size/frame), f.Channels, f.Bits/8); err != nil {
		return nil, Format{}, err
	}
	return s, f, nil
}

// checkRate checks a sample rate the caller states for a headerless file.
func checkRate(name string, rate float64) error {
	switch {
	case rate == 0:
		return fmt.Errorf("%s: the file does not record its sample rate: state it", name)
	case !(rate > 0) || rate > 1e15:
		return fmt.Errorf("%s: sample rate %v Hz: must be above zero and finite", name, rate)
	}
	return nil
}

// EncodeRaw writes s as interleaved little-endian integers of bits 16
// (int16) or 32 (int32), I before Q; zero takes s.Bits, which must then
// be one of those. Codes are written as they are, never scaled: every
// code must fit bits. A raw file records neither its rate, its width nor
// its channels: the caller keeps them.
func EncodeRaw(w io.Writer, s *Signal, bits int) error {
	if err := s.Check("signal"); err != nil {
		return err
	}
	if bits == 0 {
		bits = s.Bits
	}
	if bits != 16 && bits != 32 {
		return fmt.Errorf("raw output of %d bits: must be int16 or int32", bits)
	}
	if err := fits(s, bits, fmt.Sprintf("raw output int%d", bits)); err != nil {
		return err
	}
	return writeInterleaved(w, s, bits/8)
}
