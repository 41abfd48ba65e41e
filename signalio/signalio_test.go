package signalio

import (
	"bytes"
	"encoding/binary"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"
)

// wavBytes builds a WAV file from chunks: the RIFF header, then each
// chunk's id, length and body, padded to even length.
func wavBytes(chunks ...[]byte) []byte {
	body := []byte("WAVE")
	for _, c := range chunks {
		body = append(body, c...)
	}
	return append(append([]byte("RIFF"), binary.LittleEndian.AppendUint32(nil, uint32(len(body)))...), body...)
}

func chunk(id string, body []byte) []byte {
	out := append([]byte(id), binary.LittleEndian.AppendUint32(nil, uint32(len(body)))...)
	out = append(out, body...)
	if len(body)%2 == 1 {
		out = append(out, 0)
	}
	return out
}

// fmtBody is a fmt chunk body: tag, channels, rate, byte rate, block
// align, bits.
func fmtBody(tag, ch uint16, rate uint32, align, bits uint16) []byte {
	le := binary.LittleEndian
	b := le.AppendUint16(nil, tag)
	b = le.AppendUint16(b, ch)
	b = le.AppendUint32(b, rate)
	b = le.AppendUint32(b, rate*uint32(align))
	b = le.AppendUint16(b, align)
	return le.AppendUint16(b, bits)
}

func extBody(ch uint16, bits uint16, sub uint16, tail []byte) []byte {
	le := binary.LittleEndian
	b := fmtBody(tagExtensible, ch, 48000, ch*bits/8, bits)
	b = le.AppendUint16(b, 22)
	b = le.AppendUint16(b, bits)
	b = le.AppendUint32(b, 3)
	b = le.AppendUint16(b, sub)
	return append(b, tail...)
}

func readWAVBytes(b []byte, opt Options) (*Signal, Format, error) {
	return ReadWAV("capture.wav", bytes.NewReader(b), int64(len(b)), opt)
}

// TestWAVErrors feeds broken and unsupported headers: each must give one
// line naming the file and the rule.
func TestWAVErrors(t *testing.T) {
	pcm16 := chunk("fmt ", fmtBody(tagPCM, 1, 48000, 2, 16))
	four := chunk("data", make([]byte, 4))
	truncated := wavBytes(pcm16, chunk("data", make([]byte, 1024)))
	binary.LittleEndian.PutUint32(truncated[40:], 4000000)
	tests := []struct {
		name string
		b    []byte
		opt  Options
		want string
	}{
		{"truncated", truncated, Options{}, "capture.wav: the data chunk says 4000000 bytes but only 1024 follow (truncated file)"},
		{"empty", nil, Options{}, "too short for a WAV header"},
		{"not riff", append([]byte("OggS\x00\x00\x00\x00WAVE"), pcm16...), Options{}, `not a WAV file: the header is "OggS????WAVE"`},
		{"not wave", append([]byte("RIFF\x04\x00\x00\x00AVI "), pcm16...), Options{}, "not a WAV file"},
		{"rifx", []byte("RIFX\x04\x00\x00\x00WAVE"), Options{}, "big-endian RIFX"},
		{"rf64", []byte("RF64\xff\xff\xff\xffWAVE"), Options{}, "RF64 file (WAV over 4 GiB)"},
		{"float", wavBytes(chunk("fmt ", fmtBody(tagFloat, 1, 48000, 4, 32)), four), Options{}, "float WAV (format tag 3)"},
		{"float extensible", wavBytes(chunk("fmt ", extBody(1, 32, tagFloat, pcmGUIDTail)), four), Options{}, "float WAV (WAVE_FORMAT_EXTENSIBLE"},
		{"8-bit", wavBytes(chunk("fmt ", fmtBody(tagPCM, 1, 8000, 1, 8)), four), Options{}, "8-bit WAV (unsigned samples)"},
		{"12-bit", wavBytes(chunk("fmt ", fmtBody(tagPCM, 1, 8000, 2, 12)), four), Options{}, "12-bit samples"},
		{"3 channels", wavBytes(chunk("fmt ", fmtBody(tagPCM, 3, 8000, 6, 16)), chunk("data", make([]byte, 6))), Options{}, "3 channels: not supported"},
		{"adpcm", wavBytes(chunk("fmt ", fmtBody(0x0011, 1, 8000, 256, 4)), four), Options{}, "format tag 0x0011: compressed or unknown"},
		{"mu-law", wavBytes(chunk("fmt ", fmtBody(tagMuLaw, 1, 8000, 1, 8)), four), Options{}, "G.711 mu-law"},
		{"odd subformat", wavBytes(chunk("fmt ", extBody(1, 16, 0x0002, pcmGUIDTail)), four), Options{}, "subformat 0x0002"},
		{"foreign guid", wavBytes(chunk("fmt ", extBody(1, 16, tagPCM, make([]byte, 14))), four), Options{}, "subformat GUID"},
		{"short extensible", wavBytes(chunk("fmt ", fmtBody(tagExtensible, 1, 8000, 2, 16)), four), Options{}, "too short for its subformat"},
		{"block align", wavBytes(chunk("fmt ", fmtBody(tagPCM, 2, 8000, 2, 16)), four), Options{}, "block align is 2 bytes, but 2 channels of 16 bits take 4"},
		{"partial frame", wavBytes(pcm16, chunk("data", make([]byte, 5))), Options{}, "holds 5 bytes, not a whole number of 2-byte frames"},
		{"no data", wavBytes(pcm16), Options{}, "no data chunk"},
		{"no fmt", wavBytes(chunk("LIST", make([]byte, 4))), Options{}, "no fmt chunk"},
		{"data first", wavBytes(four, pcm16), Options{}, "data chunk comes before the fmt chunk"},
		{"short fmt", wavBytes(chunk("fmt ", make([]byte, 14)), four), Options{}, "fmt chunk has 14 bytes"},
		{"zero rate", wavBytes(chunk("fmt ", fmtBody(tagPCM, 1, 0, 2, 16)), four), Options{}, "sample rate of 0 Hz"},
		{"empty data", wavBytes(pcm16, chunk("data", nil)), Options{}, "empty (no samples)"},
		{"truncated list", wavBytes(pcm16, []byte("LIST\xff\xff\x00\x00INFO")), Options{}, `the "LIST" chunk at byte 36 says 65535 bytes but only 4 follow (truncated file)`},
		{"rate disagrees", wavBytes(pcm16, four), Options{RateHz: 44100}, "the header says 48000 Hz but the stated rate is 44100 Hz"},
		{"bits disagree", wavBytes(pcm16, four), Options{Format: Format{Kind: WAV, Bits: 24}}, "the header says wav16, 1 channel but the stated format is wav24"},
		{"over the cap", wavBytes(pcm16, chunk("data", make([]byte, 200))), Options{MaxFrames: 99}, "100 samples per channel: more than the 99"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, _, err := readWAVBytes(tt.b, tt.opt)
			if err == nil {
				t.Fatalf("no error, want %q", tt.want)
			}
			msg := err.Error()
			if !strings.Contains(msg, tt.want) || !strings.HasPrefix(msg, "capture.wav") || strings.Contains(msg, "\n") {
				t.Errorf("error %q: want one line starting with the file name and containing %q", msg, tt.want)
			}
		})
	}
}

// TestWAVChunks reads a file with unknown chunks of odd length before and
// between fmt and data, a second fmt chunk (ignored) and trailing junk
// after the data (not read), and a stale RIFF size.
func TestWAVChunks(t *testing.T) {
	data := []byte{0x01, 0x00, 0xff, 0xff, 0x00, 0x80, 0xff, 0x7f}
	b := wavBytes(chunk("bext", []byte{1, 2, 3}), chunk("fmt ", fmtBody(tagPCM, 1, 1000, 2, 16)),
		chunk("fmt ", fmtBody(tagPCM, 2, 9, 4, 16)), chunk("junk", []byte{9}), chunk("data", data))
	b = append(b, "garbage after the data chunk"...)
	binary.LittleEndian.PutUint32(b[4:], 0) // stale RIFF size, as a streaming recorder leaves it
	s, f, err := readWAVBytes(b, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if want := []int64{1, -1, -32768, 32767}; !slices.Equal(s.Samples[0], want) || f.Channels != 1 || s.RateHz != 1000 {
		t.Errorf("read %v at %v Hz as %v, want %v at 1000 Hz, 1 channel", s.Samples, s.RateHz, f, want)
	}
}

// randomSignal is a seeded signal spanning the whole code range of bits,
// extremes included.
func randomSignal(r *rand.Rand, bits, ch, n int) *Signal {
	lo, hi := codeRange(bits)
	s := &Signal{RateHz: float64(1 + r.IntN(10_000_000)), Bits: bits, Samples: make([][]int64, ch)}
	for c := range s.Samples {
		s.Samples[c] = make([]int64, n)
		for i := range n {
			switch r.IntN(8) {
			case 0:
				s.Samples[c][i] = lo
			case 1:
				s.Samples[c][i] = hi
			default:
				if bits == 64 {
					s.Samples[c][i] = int64(r.Uint64())
				} else {
					s.Samples[c][i] = lo + int64(r.Uint64N(uint64(hi-lo)+1))
				}
			}
		}
	}
	return s
}

// TestRoundTrip writes seeded random signals in every format, width and
// channel count and reads them back: the codes, the rate and the format
// must come back as written, and two encodings must be byte-identical.
func TestRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	cases := []Format{}
	for _, ch := range []int{1, 2} {
		for _, b := range []int{16, 24, 32} {
			cases = append(cases, Format{Kind: WAV, Bits: b, Channels: ch})
		}
		for _, b := range []int{16, 32} {
			cases = append(cases, Format{Kind: Raw, Bits: b, Channels: ch})
		}
		for _, b := range []int{2, 12, 18, 33, 64} {
			cases = append(cases, Format{Kind: CSV, Bits: b, Channels: ch})
		}
	}
	for _, f := range cases {
		for trial := range 20 {
			n := 1 + r.IntN(3000)
			s := randomSignal(r, f.Bits, f.Channels, n)
			if f.Kind == Raw || f.Kind == CSV {
				s.RateHz = r.Float64() * 1e8 // any rate the caller states
			}
			b, err := Marshal(s, f)
			if err != nil {
				t.Fatalf("%v, trial %d: %v", f, trial, err)
			}
			again, _ := Marshal(s, f)
			if !bytes.Equal(b, again) {
				t.Fatalf("%v: two encodings differ", f)
			}
			opt := Options{Format: f, RateHz: s.RateHz}
			if f.Kind == WAV {
				opt = Options{Format: Format{Kind: WAV}}
			}
			got, gf, err := Read("x", bytes.NewReader(b), int64(len(b)), opt)
			if err != nil {
				t.Fatalf("%v, trial %d: reading back: %v", f, trial, err)
			}
			if gf != f || got.RateHz != s.RateHz || got.Bits != s.Bits {
				t.Fatalf("%v, trial %d: read back as %v, %v Hz, %d bits; wrote %v Hz, %d bits", f, trial, gf, got.RateHz, got.Bits, s.RateHz, s.Bits)
			}
			for c := range s.Samples {
				if !slices.Equal(got.Samples[c], s.Samples[c]) {
					t.Fatalf("%v, trial %d: channel %d differs after the round trip", f, trial, c)
				}
			}
		}
	}
}

// TestEncodeErrors checks that writers refuse what they cannot store,
// never clip or scale.
func TestEncodeErrors(t *testing.T) {
	s := &Signal{RateHz: 48000, Bits: 18, Samples: [][]int64{{0, 70000, -5}}}
	tests := []struct {
		f    Format
		s    *Signal
		want string
	}{
		{Format{Kind: WAV, Bits: 16}, s, "channel sample 1 is 70000, outside -32768 to 32767"},
		{Format{Kind: WAV}, s, "WAV output of 18 bits: must be 16, 24 or 32"},
		{Format{Kind: Raw}, s, "raw output of 18 bits"},
		{Format{Kind: Raw, Bits: 16}, s, "raw output int16: channel sample 1 is 70000"},
		{Format{Kind: CSV, Bits: 16}, s, "CSV output of 16 bits"},
		{Format{Kind: WAV, Bits: 24}, &Signal{RateHz: 1e6 / 3, Bits: 16, Samples: [][]int64{{1}}}, "whole Hz"},
		{Format{Kind: WAV, Channels: 2}, s, "the signal has 1 channels"},
		{Format{Kind: WAV}, &Signal{RateHz: 1, Bits: 16, Samples: [][]int64{{1}, {2}, {3}}}, "3 channels"},
		{Format{Kind: WAV}, &Signal{RateHz: 1, Bits: 16, Samples: [][]int64{{40000}}}, "outside 16-bit"},
		{Format{}, s, "state wav, raw or csv"},
	}
	for _, tt := range tests {
		_, err := Marshal(tt.s, tt.f)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("Marshal(%v) error %v, want one containing %q", tt.f, err, tt.want)
		}
	}
	// 18-bit codes that fit a 24-bit WAV are written unscaled.
	b, err := Marshal(s, Format{Kind: WAV, Bits: 24})
	if err != nil {
		t.Fatal(err)
	}
	got, _, err := readWAVBytes(b, Options{})
	if err != nil || !slices.Equal(got.Samples[0], s.Samples[0]) {
		t.Errorf("18-bit codes in a 24-bit WAV read back as %v (%v), want %v", got, err, s.Samples[0])
	}
}

func TestRawErrors(t *testing.T) {
	read := func(b []byte, opt Options) error {
		_, _, err := ReadRaw("iq.raw", bytes.NewReader(b), int64(len(b)), opt)
		return err
	}
	i16x2 := Format{Kind: Raw, Bits: 16, Channels: 2}
	tests := []struct {
		b    []byte
		opt  Options
		want string
	}{
		{make([]byte, 6), Options{Format: i16x2, RateHz: 1e6}, "iq.raw: 6 bytes is not a whole number of 4-byte frames (int16, 2 channels)"},
		{nil, Options{Format: i16x2, RateHz: 1e6}, "iq.raw: the file is empty"},
		{make([]byte, 8), Options{Format: i16x2}, "does not record its sample rate: state it"},
		{make([]byte, 8), Options{Format: Format{Kind: Raw}, RateHz: 1}, "state its sample type, int16 or int32"},
		{make([]byte, 8), Options{Format: Format{Kind: Raw, Bits: 24}, RateHz: 1}, "must be int16 or int32"},
		{make([]byte, 8), Options{Format: Format{Kind: Raw, Bits: 16, Channels: 3}, RateHz: 1}, "3 channels"},
		{make([]byte, 40), Options{Format: i16x2, RateHz: 1, MaxFrames: 9}, "10 samples per channel: more than the 9"},
	}
	for _, tt := range tests {
		err := read(tt.b, tt.opt)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("ReadRaw(%d bytes, %+v) error %v, want %q", len(tt.b), tt.opt, err, tt.want)
		}
	}
}

func TestCSVErrors(t *testing.T) {
	opt := Options{Format: Format{Kind: CSV, Bits: 16}, RateHz: 1e6}
	tests := []struct {
		text string
		opt  Options
		want string
	}{
		{"1,2\n3\n", opt, "iq.csv line 2: 1 columns, but the first row has 2"},
		{"i,q\n1,2\n3,4,5\n", opt, "line 3: 3 columns"},
		{"1.5\n", opt, `line 1: "1.5" is not an integer`},
		{"# c\n1e3\n", opt, `line 2: "1e3" is not an integer`},
		{"40000\n", opt, "line 1: 40000 is outside 16-bit two's complement (-32768 to 32767)"},
		{"-32769\n", opt, "outside 16-bit"},
		{"99999999999999999999\n", opt, "outside 16-bit"},
		{"1,\n", opt, "column 2 is empty"},
		{"a,b,c\n", opt, "3 columns: want 1 (real) or 2 (I,Q)"},
		{"i,1\n", opt, `"i" is not an integer`},
		{"# only a comment\ni,q\n", opt, "no samples"},
		{"", opt, "no samples"},
		{"1\n", Options{Format: Format{Kind: CSV, Bits: 16, Channels: 2}, RateHz: 1}, "1 columns but 2 channels were stated"},
		{"1\n", Options{Format: Format{Kind: CSV}, RateHz: 1}, "state the bits"},
		{"1\n", Options{Format: Format{Kind: CSV, Bits: 16}}, "state it"},
		{strings.Repeat("1", 5000) + "\n", opt, "line 1: longer than 4096 bytes"},
		{"1\n2\n3\n", Options{Format: Format{Kind: CSV, Bits: 16}, RateHz: 1, MaxFrames: 2}, "more than 2 samples per channel (line 3)"},
	}
	for _, tt := range tests {
		_, _, err := ReadCSV("iq.csv", strings.NewReader(tt.text), tt.opt)
		if err == nil || !strings.Contains(err.Error(), tt.want) || strings.Contains(err.Error(), "\n") {
			t.Errorf("ReadCSV(%q) error %v, want one line with %q", cut(tt.text), err, tt.want)
		}
	}
	// What is allowed: a BOM, spaces, CRLF, comments, blank lines, a
	// header, signs.
	s, f, err := ReadCSV("iq.csv", strings.NewReader("\uFEFF# capture\r\n I , Q \r\n\r\n1, -2\r\n+3,4\r\n# end\r\n"), opt)
	if err != nil {
		t.Fatal(err)
	}
	if f.Channels != 2 || !slices.Equal(s.Samples[0], []int64{1, 3}) || !slices.Equal(s.Samples[1], []int64{-2, 4}) {
		t.Errorf("read %v as %v, want I [1 3], Q [-2 4]", s.Samples, f)
	}
}

// TestCap checks that a header claiming more data than the file holds,
// or more frames than the cap, is refused without allocating from the
// claim.
func TestCap(t *testing.T) {
	pcm := chunk("fmt ", fmtBody(tagPCM, 2, 48000, 8, 32))
	// A data chunk that claims 4 GiB in a 100-byte file.
	lie := wavBytes(pcm, []byte("data\xf0\xff\xff\xff"), make([]byte, 56))
	// A real file of 2^24 + 1 stereo 32-bit frames (128 MiB), served by a
	// reader that makes its bytes up instead of holding them.
	big := wavBytes(pcm, []byte("data"), binary.LittleEndian.AppendUint32(nil, (MaxFrames+1)*8))
	bigR := &zeroTail{head: big, size: int64(len(big)) + (MaxFrames+1)*8}
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	_, _, err1 := readWAVBytes(lie, Options{})
	_, _, err2 := ReadWAV("big.wav", bigR, bigR.size, Options{})
	runtime.ReadMemStats(&after)
	if err1 == nil || !strings.Contains(err1.Error(), "truncated file") {
		t.Errorf("a 4 GiB claim in 100 bytes: error %v, want truncated", err1)
	}
	if err2 == nil || !strings.Contains(err2.Error(), "16777217 samples per channel: more than the 16777216 this reader takes (2^24)") {
		t.Errorf("2^24+1 frames: error %v, want the cap", err2)
	}
	if got := after.TotalAlloc - before.TotalAlloc; got > 1<<20 {
		t.Errorf("refusing both allocated %d bytes, want under 1 MiB", got)
	}
	if _, _, err := readWAVBytes(lie, Options{MaxFrames: MaxFrames + 1}); err == nil || !strings.Contains(err.Error(), "frame limit") {
		t.Errorf("MaxFrames above the cap: error %v", err)
	}
}

// zeroTail is an io.ReaderAt of size bytes: head, then zeros.
type zeroTail struct {
	head []byte
	size int64
}

func (z *zeroTail) ReadAt(p []byte, off int64) (int, error) {
	for i := range p {
		if off+int64(i) < int64(len(z.head)) {
			p[i] = z.head[off+int64(i)]
		} else {
			p[i] = 0
		}
	}
	return len(p), nil
}

func TestChoose(t *testing.T) {
	tests := []struct {
		name   string
		stated string // "" for none
		want   Format
		err    string
	}{
		{"cap.wav", "", Format{Kind: WAV}, ""},
		{"CAP.WAV", "wav24", Format{Kind: WAV, Bits: 24}, ""},
		{"cap.csv", "", Format{Kind: CSV}, ""},
		{"cap.csv", "csv14", Format{Kind: CSV, Bits: 14}, ""},
		{"cap.raw", "int16", Format{Kind: Raw, Bits: 16}, ""},
		{"cap.bin", "s32le", Format{Kind: Raw, Bits: 32}, ""},
		{"cap.dat", "int32", Format{Kind: Raw, Bits: 32}, ""},
		{"cap.dat", "wav", Format{Kind: WAV}, ""},
		{"cap.raw", "", Format{}, "cap.raw: a raw file has no header: state its sample type, int16 or int32"},
		{"cap.dat", "", Format{}, `cap.dat: cannot tell the format from the extension ".dat"`},
		{"cap", "", Format{}, `extension ""`},
		{"cap.wav", "int16", Format{}, "cap.wav: the name says wav but the stated format is int16"},
		{"cap.csv", "wav", Format{}, "the name says csv but the stated format is wav"},
		{"cap.raw", "csv", Format{}, "the name says raw but the stated format is csv"},
	}
	for _, tt := range tests {
		var st Format
		if tt.stated != "" {
			var err error
			if st, err = ParseFormat(tt.stated); err != nil {
				t.Fatal(err)
			}
		}
		got, err := Choose(tt.name, st)
		if tt.err != "" {
			if err == nil || !strings.Contains(err.Error(), tt.err) {
				t.Errorf("Choose(%q, %q) error %v, want %q", tt.name, tt.stated, err, tt.err)
			}
			continue
		}
		if err != nil || got != tt.want {
			t.Errorf("Choose(%q, %q) = %v, %v; want %v", tt.name, tt.stated, got, err, tt.want)
		}
	}
}

func TestParseFormat(t *testing.T) {
	for _, s := range []string{"wav", "wav16", "wav24", "wav32", "int16", "int32", "csv", "csv2", "csv64"} {
		f, err := ParseFormat(" " + strings.ToUpper(s) + " ")
		if err != nil {
			t.Errorf("ParseFormat(%q): %v", s, err)
			continue
		}
		// String gives back the name ParseFormat reads.
		if f.String() != s {
			t.Errorf("ParseFormat(%q).String() = %q", s, f.String())
		}
	}
	for _, s := range []string{"", "int8", "int24", "wav8", "float32", "csv0", "csv65", "csvx", "raw", strings.Repeat("x", 100)} {
		_, err := ParseFormat(s)
		if err == nil {
			t.Errorf("ParseFormat(%q): no error", s)
		} else if len(err.Error()) > 200 {
			t.Errorf("ParseFormat(%q): message of %d bytes, want the value cut", s, len(err.Error()))
		}
	}
}

// TestReadFile covers the file-level path: a missing file, a directory,
// and a WAV encoded to a file and read back.
func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	if _, _, err := ReadFile(filepath.Join(dir, "none.wav"), Options{}); err == nil || !strings.Contains(err.Error(), "none.wav: cannot open: no such file") {
		t.Errorf("missing file: %v", err)
	}
	os.Mkdir(filepath.Join(dir, "d.wav"), 0o755)
	if _, _, err := ReadFile(filepath.Join(dir, "d.wav"), Options{}); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("directory: %v", err)
	}
	s := &Signal{RateHz: 8000, Bits: 16, Samples: [][]int64{{1, 2, 3}, {-1, -2, -3}}}
	b, err := Marshal(s, Format{Kind: CSV})
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(dir, "iq.csv")
	os.WriteFile(p, b, 0o644)
	got, f, err := ReadFile(p, Options{Format: Format{Bits: 16}, RateHz: 8000})
	if err != nil || f.Channels != 2 || !slices.Equal(got.Samples[1], s.Samples[1]) {
		t.Errorf("CSV file round trip: %v, %v, %v", got, f, err)
	}
	if !bytes.HasPrefix(b, []byte("# stepdown signal: 8000 Hz, 16-bit two's complement codes, 2 channels (I,Q), 3 samples per channel\n# stepdown: planning data")) {
		t.Errorf("CSV header:\n%s", b)
	}
}
