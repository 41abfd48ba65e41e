package signalio

import (
	"fmt"
	"math"
	"path/filepath"
	"strconv"
	"strings"
)

// MaxFrames is the most frames (samples per channel) a reader accepts and
// the default of Options.MaxFrames: 2^24, a little under six minutes of
// audio-rate data or 0.14 s at 122.88 MS/s. Two channels of int64 codes at
// the cap take 256 MiB, which keeps a read, its temporary buffers and a
// run of the chain over it well under 1 GiB.
const MaxFrames = 1 << 24

// Signal is a recorded signal as integer codes.
//
// Samples holds one slice per channel, all of the same length: one channel
// for a real signal, two for I/Q with I first. Each value is a two's
// complement code of Bits bits, so it lies in [-2^(Bits-1), 2^(Bits-1)-1];
// full scale is 2^(Bits-1). The zero Signal has no channels and is not
// valid (see Check).
type Signal struct {
	// RateHz is the sample rate in Hz, per channel.
	RateHz float64
	// Bits is the word width of the codes, 1 to 64 (a 1-bit word, the
	// codes -1 and 0, is a single-bit noise-shaped converter's).
	Bits int
	// Samples are the codes, Samples[channel][frame].
	Samples [][]int64
}

// Channels returns the number of channels: 1 for a real signal, 2 for I/Q.
func (s *Signal) Channels() int { return len(s.Samples) }

// Frames returns the number of samples per channel.
func (s *Signal) Frames() int {
	if len(s.Samples) == 0 {
		return 0
	}
	return len(s.Samples[0])
}

// Check reports whether s is a valid signal: a finite positive rate, Bits
// from 1 to 64, one or two channels of equal length, and every code
// within Bits. name (the file or the field) starts the message.
func (s *Signal) Check(name string) error {
	name = display(name)
	if !(s.RateHz > 0) || math.IsInf(s.RateHz, 0) {
		return fmt.Errorf("%s: sample rate %v Hz: must be finite and above zero", name, s.RateHz)
	}
	if s.Bits < 1 || s.Bits > 64 {
		return fmt.Errorf("%s: word width %d bits: must be 1 to 64", name, s.Bits)
	}
	if c := len(s.Samples); c != 1 && c != 2 {
		return fmt.Errorf("%s: %d channels: must be 1 (real) or 2 (I/Q)", name, c)
	}
	if c := len(s.Samples); c == 2 && len(s.Samples[1]) != len(s.Samples[0]) {
		return fmt.Errorf("%s: channel I has %d samples and channel Q %d: must be equal", name, len(s.Samples[0]), len(s.Samples[1]))
	}
	lo, hi := codeRange(s.Bits)
	for c, ch := range s.Samples {
		for i, v := range ch {
			if v < lo || v > hi {
				return fmt.Errorf("%s: %s sample %d is %d: outside %d-bit two's complement (%d to %d)", name, channelName(c, len(s.Samples)), i, v, s.Bits, lo, hi)
			}
		}
	}
	return nil
}

// codeRange is the range of a bits-wide two's complement code.
func codeRange(bits int) (lo, hi int64) {
	if bits >= 64 {
		return math.MinInt64, math.MaxInt64
	}
	return -1 << (bits - 1), 1<<(bits-1) - 1
}

func channelName(c, n int) string {
	if n == 1 {
		return "channel"
	}
	return [2]string{"channel I", "channel Q"}[c]
}

// display is the name used in messages: the file name, or "input".
func display(name string) string {
	if name == "" {
		return "input"
	}
	return name
}

// Kind is a file format. The zero Kind is unstated: Choose picks one from
// the file name.
type Kind int

const (
	// WAV is a RIFF/WAVE file of integer PCM.
	WAV Kind = iota + 1
	// Raw is headerless interleaved little-endian integers.
	Raw
	// CSV is text, one frame a line.
	CSV
)

// String returns "wav", "raw", "csv", or "unstated" for the zero Kind.
func (k Kind) String() string {
	switch k {
	case WAV:
		return "wav"
	case Raw:
		return "raw"
	case CSV:
		return "csv"
	case 0:
		return "unstated"
	}
	return "Kind(" + strconv.Itoa(int(k)) + ")"
}

// Format describes how a signal is stored. A zero field is unstated: a
// reader takes it from the file (a WAV header, a CSV's columns) where it
// can, and an encoder from the signal.
type Format struct {
	Kind Kind
	// Bits is the sample word: 16, 24 or 32 for WAV; 16 or 32 for raw
	// (int16, int32); 1 to 64 for CSV, the width its values are checked
	// against (1: the codes -1 and 0 of a single-bit modulator).
	Bits int
	// Channels is 1 (real) or 2 (I/Q, I first).
	Channels int
}

// String names the format as ParseFormat reads it, with the channels:
// "wav24, 2 channels", "int16, 1 channel".
func (f Format) String() string {
	var s string
	switch {
	case f.Kind == Raw && f.Bits != 0:
		s = "int" + strconv.Itoa(f.Bits)
	case f.Kind == Raw:
		s = "raw"
	case f.Bits != 0:
		s = f.Kind.String() + strconv.Itoa(f.Bits)
	default:
		s = f.Kind.String()
	}
	switch f.Channels {
	case 0:
		return s
	case 1:
		return s + ", 1 channel"
	}
	return s + ", " + strconv.Itoa(f.Channels) + " channels"
}

// ParseFormat reads a format name as a user types it, in any case:
//
//	wav, wav16, wav24, wav32   WAV (the bare name takes the width from the header or signal)
//	int16, int32               raw little-endian integers (s16le and s32le are accepted too)
//	csv, csv1 ... csv64        CSV (the number is the values' bit width)
//
// The channel count is not part of the name.
func ParseFormat(s string) (Format, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	switch t {
	case "wav":
		return Format{Kind: WAV}, nil
	case "wav16", "wav24", "wav32":
		b, _ := strconv.Atoi(t[3:])
		return Format{Kind: WAV, Bits: b}, nil
	case "int16", "s16le":
		return Format{Kind: Raw, Bits: 16}, nil
	case "int32", "s32le":
		return Format{Kind: Raw, Bits: 32}, nil
	case "csv":
		return Format{Kind: CSV}, nil
	case "raw", "bin":
		return Format{}, fmt.Errorf("format %q: a raw file has no header, so name its sample type: int16 or int32", cut(s))
	}
	if rest, ok := strings.CutPrefix(t, "csv"); ok {
		if b, err := strconv.Atoi(rest); err == nil && b >= 1 && b <= 64 {
			return Format{Kind: CSV, Bits: b}, nil
		}
	}
	return Format{}, fmt.Errorf("format %q: unknown (want wav, wav16, wav24, wav32, int16, int32, csv or csvN with N the bit width)", cut(s))
}

// Choose decides the format of the named file from what the caller
// stated and the file's extension (any case):
//
//   - .wav is WAV and .csv is CSV; a stated kind that differs is an error
//     (a WAV read as raw would turn its header into samples).
//   - .raw and .bin are raw and need the sample type stated (int16 or
//     int32): a raw file has no header.
//   - any other extension needs the kind stated, and takes it.
//
// The stated Bits and Channels are kept. Choose does not open the file.
func Choose(name string, stated Format) (Format, error) {
	ext := strings.ToLower(filepath.Ext(name))
	byExt := Kind(0)
	switch ext {
	case ".wav":
		byExt = WAV
	case ".csv":
		byExt = CSV
	case ".raw", ".bin":
		byExt = Raw
	}
	f := stated
	switch {
	case f.Kind == 0 && byExt == 0:
		return Format{}, fmt.Errorf("%s: cannot tell the format from the extension %q: state it (wav, int16, int32 or csv) or name the file .wav, .csv, .raw or .bin", display(name), ext)
	case f.Kind == 0:
		f.Kind = byExt
	case byExt != 0 && byExt != Raw && f.Kind != byExt:
		return Format{}, fmt.Errorf("%s: the name says %s but the stated format is %s: rename the file or state %s", display(name), byExt, f, byExt)
	case byExt == Raw && f.Kind != Raw:
		return Format{}, fmt.Errorf("%s: the name says raw but the stated format is %s: rename the file or state int16 or int32", display(name), f)
	}
	if f.Kind == Raw && f.Bits == 0 {
		return Format{}, fmt.Errorf("%s: a raw file has no header: state its sample type, int16 or int32", display(name))
	}
	return f, checkFormat(name, f)
}

// checkFormat checks the stated fields of f.
func checkFormat(name string, f Format) error {
	name = display(name)
	switch f.Kind {
	case WAV:
		if f.Bits != 0 && f.Bits != 16 && f.Bits != 24 && f.Bits != 32 {
			return fmt.Errorf("%s: WAV of %d bits: must be 16, 24 or 32", name, f.Bits)
		}
	case Raw:
		if f.Bits != 16 && f.Bits != 32 {
			return fmt.Errorf("%s: raw samples of %d bits: must be int16 or int32", name, f.Bits)
		}
	case CSV:
		if f.Bits != 0 && (f.Bits < 1 || f.Bits > 64) {
			return fmt.Errorf("%s: CSV values of %d bits: must be 1 to 64", name, f.Bits)
		}
	default:
		return fmt.Errorf("%s: format %s: must be wav, raw or csv", name, f.Kind)
	}
	if f.Channels != 0 && f.Channels != 1 && f.Channels != 2 {
		return fmt.Errorf("%s: %d channels: must be 1 (real) or 2 (I/Q)", name, f.Channels)
	}
	return nil
}

// cut shortens a user's value for a message.
func cut(s string) string {
	const n = 40
	r := []rune(s)
	if len(r) > n {
		return string(r[:n]) + "..."
	}
	return s
}
