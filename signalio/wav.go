package signalio

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
)

// WAV format tags (Microsoft's mmreg.h; common practice).
const (
	tagPCM        = 0x0001
	tagFloat      = 0x0003
	tagALaw       = 0x0006
	tagMuLaw      = 0x0007
	tagExtensible = 0xFFFE
)

// pcmGUIDTail is bytes 2 to 15 of KSDATAFORMAT_SUBTYPE_PCM
// (00000001-0000-0010-8000-00aa00389b71) as stored in a file; the first two
// bytes are the format tag of the subformat (Microsoft's ksmedia.h; common
// practice).
var pcmGUIDTail = []byte{0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71}

// Options says how to read a signal. Its zero value reads a WAV file with
// everything taken from the header, up to MaxFrames frames.
type Options struct {
	// Format is what the caller states. ReadFile chooses the kind from
	// the extension when it is zero (see Choose). Raw needs Bits; CSV
	// needs Bits, the width its values are checked against. A non-zero
	// Bits or Channels must agree with what a WAV header or a CSV's
	// columns say.
	Format Format
	// RateHz is the sample rate in Hz. Raw and CSV files need it; for a
	// WAV file zero takes the header's and any other value must agree
	// with it.
	RateHz float64
	// MaxFrames caps the frames read; zero selects MaxFrames, the most
	// it may be. A larger input is refused before its samples are
	// allocated.
	MaxFrames int
}

func (o Options) maxFrames(name string) (int, error) {
	switch {
	case o.MaxFrames == 0:
		return MaxFrames, nil
	case o.MaxFrames < 0 || o.MaxFrames > MaxFrames:
		return 0, fmt.Errorf("%s: frame limit %d: must be 1 to %d", display(name), o.MaxFrames, MaxFrames)
	}
	return o.MaxFrames, nil
}

// tooLong is the message for an input over the frame cap.
func tooLong(name string, frames int64, max int) error {
	return fmt.Errorf("%s: %d samples per channel: more than the %d this reader takes (2^%d); cut the recording shorter", display(name), frames, max, int(math.Round(math.Log2(float64(max)))))
}

// ReadWAV reads a RIFF/WAVE file of integer PCM, 16, 24 or 32 bits, one
// channel (real) or two (I/Q, channel 0 = I), from r, which holds size
// bytes. name is the file's name for messages.
//
// It walks the chunks from the start, skipping unknown ones and their pad
// bytes, until it has the fmt chunk and then the data chunk; what follows
// the data chunk is not read. The RIFF size field is not trusted (some
// recorders leave it stale) but every chunk must fit within size. Both
// plain PCM (tag 1) and WAVE_FORMAT_EXTENSIBLE with the PCM subformat are
// accepted; the extensible header's valid-bits field is not applied:
// codes are returned at the container width, as stored. Float, 8-bit,
// compressed and more than two channels are refused, each with a one-line
// error naming the file and the rule.
func ReadWAV(name string, r io.ReaderAt, size int64, opt Options) (*Signal, Format, error) {
	name = display(name)
	maxF, err := opt.maxFrames(name)
	if err != nil {
		return nil, Format{}, err
	}
	fail := func(format string, a ...any) (*Signal, Format, error) {
		return nil, Format{}, fmt.Errorf("%s: "+format, append([]any{name}, a...)...)
	}
	var hdr [12]byte
	if size < 12 {
		return fail("%d bytes: too short for a WAV header (want RIFF....WAVE)", size)
	}
	if _, err := r.ReadAt(hdr[:], 0); err != nil {
		return fail("reading the header: %v", err)
	}
	switch {
	case string(hdr[0:4]) == "RF64" || string(hdr[0:4]) == "BW64":
		return fail("an %s file (WAV over 4 GiB): not supported, only RIFF/WAVE", hdr[0:4])
	case string(hdr[0:4]) == "RIFX":
		return fail("a big-endian RIFX file: not supported, only little-endian RIFF/WAVE")
	case string(hdr[0:4]) != "RIFF" || string(hdr[8:12]) != "WAVE":
		return fail("not a WAV file: the header is %q, want RIFF....WAVE", printable(hdr[:]))
	}

	var (
		fmtSeen bool
		fm      wavFmt
	)
	off := int64(12)
	for {
		if size-off < 8 {
			if !fmtSeen {
				return fail("no fmt chunk before the end of the file")
			}
			return fail("no data chunk before the end of the file")
		}
		var ch [8]byte
		if _, err := r.ReadAt(ch[:], off); err != nil {
			return fail("reading the chunk at byte %d: %v", off, err)
		}
		id := string(ch[0:4])
		n := int64(binary.LittleEndian.Uint32(ch[4:8]))
		body := off + 8
		if n > size-body {
			if id == "data" {
				return fail("the data chunk says %d bytes but only %d follow (truncated file)", n, size-body)
			}
			return fail("the %q chunk at byte %d says %d bytes but only %d follow (truncated file)", printable(ch[0:4]), off, n, size-body)
		}
		switch id {
		case "fmt ":
			if fmtSeen {
				break // the first one rules
			}
			if n < 16 {
				return fail("the fmt chunk has %d bytes: too short (want at least 16)", n)
			}
			b := make([]byte, min(n, 40))
			if _, err := r.ReadAt(b, body); err != nil {
				return fail("reading the fmt chunk: %v", err)
			}
			fm, err = parseFmt(b)
			if err != nil {
				return fail("%v", err)
			}
			fmtSeen = true
		case "data":
			if !fmtSeen {
				return fail("the data chunk comes before the fmt chunk")
			}
			return readWAVData(name, r, body, n, fm, opt, maxF)
		}
		// Chunks are padded to an even length.
		off = body + n + n&1
	}
}

// wavFmt is what the fmt chunk says.
type wavFmt struct {
	channels, bits, blockAlign int
	rate                       uint32
}

// parseFmt checks the first (up to 40) bytes of a fmt chunk.
func parseFmt(b []byte) (wavFmt, error) {
	le := binary.LittleEndian
	tag := le.Uint16(b[0:2])
	f := wavFmt{
		channels:   int(le.Uint16(b[2:4])),
		rate:       le.Uint32(b[4:8]),
		blockAlign: int(le.Uint16(b[12:14])),
		bits:       int(le.Uint16(b[14:16])),
	}
	if tag == tagExtensible {
		if len(b) < 40 || le.Uint16(b[16:18]) < 22 {
			return f, errors.New("the fmt chunk says WAVE_FORMAT_EXTENSIBLE but is too short for its subformat (want 40 bytes)")
		}
		sub := le.Uint16(b[24:26])
		if !bytes.Equal(b[26:40], pcmGUIDTail) {
			return f, fmt.Errorf("WAVE_FORMAT_EXTENSIBLE with subformat GUID %x: not supported (only integer PCM)", b[24:40])
		}
		switch sub {
		case tagPCM:
		case tagFloat:
			return f, errors.New("float WAV (WAVE_FORMAT_EXTENSIBLE, IEEE float subformat): not supported, only integer PCM of 16, 24 or 32 bits")
		default:
			return f, fmt.Errorf("WAVE_FORMAT_EXTENSIBLE with subformat 0x%04x: compressed or unknown, not supported (only integer PCM)", sub)
		}
		if v := int(le.Uint16(b[18:20])); v > f.bits {
			return f, fmt.Errorf("the fmt chunk says %d valid bits in a %d-bit sample: impossible", v, f.bits)
		}
	} else {
		switch tag {
		case tagPCM:
		case tagFloat:
			return f, errors.New("float WAV (format tag 3): not supported, only integer PCM of 16, 24 or 32 bits")
		case tagALaw, tagMuLaw:
			return f, fmt.Errorf("a G.711 %s WAV (format tag %d): compressed, not supported (only integer PCM)", map[uint16]string{tagALaw: "A-law", tagMuLaw: "mu-law"}[tag], tag)
		default:
			return f, fmt.Errorf("format tag 0x%04x: compressed or unknown, not supported (only integer PCM, tag 1, or WAVE_FORMAT_EXTENSIBLE with PCM)", tag)
		}
	}
	switch {
	case f.bits == 8:
		return f, errors.New("8-bit WAV (unsigned samples): not supported, only 16, 24 or 32 bits")
	case f.bits != 16 && f.bits != 24 && f.bits != 32:
		return f, fmt.Errorf("%d-bit samples: not supported, only 16, 24 or 32 bits", f.bits)
	case f.channels == 0:
		return f, errors.New("the fmt chunk says 0 channels")
	case f.channels > 2:
		return f, fmt.Errorf("%d channels: not supported, only 1 (real) or 2 (I/Q)", f.channels)
	case f.blockAlign != f.channels*f.bits/8:
		return f, fmt.Errorf("the fmt chunk's block align is %d bytes, but %d channels of %d bits take %d", f.blockAlign, f.channels, f.bits, f.channels*f.bits/8)
	case f.rate == 0:
		return f, errors.New("the fmt chunk says a sample rate of 0 Hz")
	}
	return f, nil
}

// readWAVData reads n bytes of samples at off, after checking them
// against the frame cap: n has been checked against the file's size.
func readWAVData(name string, r io.ReaderAt, off, n int64, fm wavFmt, opt Options, maxF int) (*Signal, Format, error) {
	f := Format{Kind: WAV, Bits: fm.bits, Channels: fm.channels}
	if s := opt.Format; (s.Bits != 0 && s.Bits != f.Bits) || (s.Channels != 0 && s.Channels != f.Channels) {
		return nil, Format{}, fmt.Errorf("%s: the header says %s but the stated format is %s", name, f, s)
	}
	if opt.RateHz != 0 && opt.RateHz != float64(fm.rate) {
		return nil, Format{}, fmt.Errorf("%s: the header says %d Hz but the stated rate is %s Hz", name, fm.rate, strconv.FormatFloat(opt.RateHz, 'f', -1, 64))
	}
	if n%int64(fm.blockAlign) != 0 {
		return nil, Format{}, fmt.Errorf("%s: the data chunk holds %d bytes, not a whole number of %d-byte frames (%s)", name, n, fm.blockAlign, f)
	}
	frames := n / int64(fm.blockAlign)
	if frames == 0 {
		return nil, Format{}, fmt.Errorf("%s: the data chunk is empty (no samples)", name)
	}
	if frames > int64(maxF) {
		return nil, Format{}, tooLong(name, frames, maxF)
	}
	s := &Signal{RateHz: float64(fm.rate), Bits: fm.bits}
	if err := readInterleaved(name, s, r, off, int(frames), fm.channels, fm.bits/8); err != nil {
		return nil, Format{}, err
	}
	return s, f, nil
}

// readInterleaved reads frames frames of little-endian two's complement
// samples, width bytes each, at off into s.Samples, in blocks so that
// the raw bytes never take more than a block.
func readInterleaved(name string, s *Signal, r io.ReaderAt, off int64, frames, channels, width int) error {
	s.Samples = make([][]int64, channels)
	for c := range s.Samples {
		s.Samples[c] = make([]int64, frames)
	}
	const block = 1 << 16 // frames per read
	buf := make([]byte, min(frames, block)*channels*width)
	for i := 0; i < frames; i += block {
		m := min(block, frames-i)
		b := buf[:m*channels*width]
		if _, err := r.ReadAt(b, off+int64(i*channels*width)); err != nil {
			return fmt.Errorf("%s: reading the samples: %v", name, err)
		}
		for k := range m {
			for c := range channels {
				p := b[(k*channels+c)*width:]
				var v int64
				switch width {
				case 2:
					v = int64(int16(binary.LittleEndian.Uint16(p)))
				case 3:
					v = int64(int32(uint32(p[0])<<8|uint32(p[1])<<16|uint32(p[2])<<24) >> 8)
				case 4:
					v = int64(int32(binary.LittleEndian.Uint32(p)))
				}
				s.Samples[c][i+k] = v
			}
		}
	}
	return nil
}

// printable shows bytes for a message, with anything not printable ASCII
// as '?'.
func printable(b []byte) string {
	out := make([]byte, len(b))
	for i, c := range b {
		if c < 0x20 || c > 0x7e {
			c = '?'
		}
		out[i] = c
	}
	return string(out)
}

// wavComment is the LIST/INFO comment EncodeWAV writes: the file is
// planning data (see the package documentation).
const wavComment = "stepdown: planning data, not a sign-off; a bit-true simulation of the RTL and the team's own sign-off decide"

// EncodeWAV writes s as a WAV file of plain integer PCM (format tag 1, the
// common practice for one or two channels whose width fills the
// container), of bits 16, 24 or 32; zero takes s.Bits, which must then be
// one of those. Codes are written as they are, never scaled: every code
// must fit bits. A LIST/INFO chunk (ISFT and ICMT) between fmt and data
// says the file is stepdown planning data; readers skip it. The rate must
// be a whole number of Hz below 2^32, as the header stores it.
func EncodeWAV(w io.Writer, s *Signal, bits int) error {
	if err := s.Check("signal"); err != nil {
		return err
	}
	if bits == 0 {
		bits = s.Bits
	}
	if bits != 16 && bits != 24 && bits != 32 {
		return fmt.Errorf("WAV output of %d bits: must be 16, 24 or 32 (state wav16, wav24 or wav32)", bits)
	}
	if s.RateHz != math.Trunc(s.RateHz) || s.RateHz >= 1<<32 {
		return fmt.Errorf("WAV output: sample rate %v Hz: a WAV header holds only whole Hz below 2^32; write CSV or raw instead", s.RateHz)
	}
	if err := fits(s, bits, fmt.Sprintf("WAV output of %d bits", bits)); err != nil {
		return err
	}
	ch, width := s.Channels(), bits/8
	dataLen := int64(s.Frames()) * int64(ch*width)
	list := infoChunk("stepdown", wavComment)
	riff := 4 + (8 + 16) + int64(len(list)) + 8 + dataLen + dataLen&1
	if riff > math.MaxUint32 {
		return fmt.Errorf("WAV output: %d bytes of samples: over the 4 GiB a RIFF file holds", dataLen)
	}
	le := binary.LittleEndian
	var h []byte
	h = append(h, "RIFF"...)
	h = le.AppendUint32(h, uint32(riff))
	h = append(h, "WAVEfmt "...)
	h = le.AppendUint32(h, 16)
	h = le.AppendUint16(h, tagPCM)
	h = le.AppendUint16(h, uint16(ch))
	h = le.AppendUint32(h, uint32(s.RateHz))
	h = le.AppendUint32(h, uint32(s.RateHz)*uint32(ch*width))
	h = le.AppendUint16(h, uint16(ch*width))
	h = le.AppendUint16(h, uint16(bits))
	h = append(h, list...)
	h = append(h, "data"...)
	h = le.AppendUint32(h, uint32(dataLen))
	if _, err := w.Write(h); err != nil {
		return err
	}
	if err := writeInterleaved(w, s, width); err != nil {
		return err
	}
	if dataLen&1 == 1 {
		_, err := w.Write([]byte{0})
		return err
	}
	return nil
}

// infoChunk is a LIST chunk of type INFO with the software (ISFT) and
// comment (ICMT) entries, each a NUL-terminated string padded to even
// length.
func infoChunk(software, comment string) []byte {
	le := binary.LittleEndian
	sub := func(id, text string) []byte {
		b := append([]byte(text), 0)
		out := append([]byte(id), le.AppendUint32(nil, uint32(len(b)))...)
		out = append(out, b...)
		if len(b)&1 == 1 {
			out = append(out, 0)
		}
		return out
	}
	body := append([]byte("INFO"), sub("ISFT", software)...)
	body = append(body, sub("ICMT", comment)...)
	out := append([]byte("LIST"), le.AppendUint32(nil, uint32(len(body)))...)
	return append(out, body...)
}

// fits checks that every code of s fits bits.
func fits(s *Signal, bits int, what string) error {
	if bits >= s.Bits {
		return nil // Check has held every code to s.Bits
	}
	lo, hi := codeRange(bits)
	for c, ch := range s.Samples {
		for i, v := range ch {
			if v < lo || v > hi {
				return fmt.Errorf("%s: %s sample %d is %d, outside %d to %d; the writer does not scale codes, so shift or saturate them first", what, channelName(c, len(s.Samples)), i, v, lo, hi)
			}
		}
	}
	return nil
}

// writeInterleaved writes the frames of s as little-endian integers of
// width bytes, a block at a time.
func writeInterleaved(w io.Writer, s *Signal, width int) error {
	ch, n := s.Channels(), s.Frames()
	const block = 1 << 16
	buf := make([]byte, 0, min(n, block)*ch*width)
	for i := 0; i < n; i += block {
		buf = buf[:0]
		for k := i; k < min(n, i+block); k++ {
			for c := range ch {
				v := uint64(s.Samples[c][k])
				switch width {
				case 2:
					buf = binary.LittleEndian.AppendUint16(buf, uint16(v))
				case 3:
					buf = append(buf, byte(v), byte(v>>8), byte(v>>16))
				case 4:
					buf = binary.LittleEndian.AppendUint32(buf, uint32(v))
				}
			}
		}
		if _, err := w.Write(buf); err != nil {
			return err
		}
	}
	return nil
}
