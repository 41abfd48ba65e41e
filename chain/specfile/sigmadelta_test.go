package specfile

import (
	"slices"
	"strings"
	"testing"
)

const sdBase = `input_rate = "3.072 MS/s"
output_rate = "48 kS/s"
passband = "20 kHz"
ripple = "0.1 dB"
`

// The [sigma_delta] table: the modulator, 1-bit input words, the derived
// mask, Candy's default CIC orders.
func TestSigmaDelta(t *testing.T) {
	s, err := Parse("sd.toml", []byte(sdBase+"[sigma_delta]\norder = 4\nbits = 1\nsnr = \"85 dB\"\nzeros = \"optimal\"\nobg = 1.4\n"))
	if err != nil {
		t.Fatal(err)
	}
	m := s.SigmaDelta
	if m == nil || m.Order != 4 || m.Bits != 1 || m.SNRDB != 85 || m.OBG != 1.4 || len(m.Zeros) != 2 {
		t.Fatalf("modulator %+v", m)
	}
	c := s.Chain
	if c.InputBits != 1 || !c.NoiseShaped || c.RejectionMask == nil || c.RejectionDB != c.RejectionMask.Max() {
		t.Errorf("chain spec: input bits %d, noise-shaped %v, mask %v, rejection %g", c.InputBits, c.NoiseShaped, c.RejectionMask != nil, c.RejectionDB)
	}
	// Candy (1986): order + 1 upward.
	if want := []int{5, 6, 7}; !slices.Equal(s.CICOrders, want) {
		t.Errorf("cic orders %v, want %v", s.CICOrders, want)
	}
	if s.FixedSettings().Shaper == nil {
		t.Error("FixedSettings has no Shaper")
	}
	// A list of zeros in Hz; search.cic_orders overrides Candy's default.
	s, err = Parse("sd.toml", []byte(sdBase+"[words]\ninput = 2\n[search]\ncic_orders = [2, 3]\n[sigma_delta]\norder = 3\nbits = 2\nsnr = 70\nzeros = [\"0 Hz\", \"15 kHz\"]\n"))
	if err != nil {
		t.Fatal(err)
	}
	if z := s.SigmaDelta.Zeros; len(z) != 2 || z[0] != 0 || z[1] != 15e3/3.072e6 || !slices.Equal(s.CICOrders, []int{2, 3}) {
		t.Errorf("zeros %v, cic orders %v", z, s.CICOrders)
	}
}

// Every refusal names the key and the rule.
func TestSigmaDeltaErrors(t *testing.T) {
	sd := "[sigma_delta]\norder = 4\nbits = 1\nsnr = \"85 dB\"\n"
	for _, c := range []struct{ text, want string }{
		{sdBase + "rejection = \"90 dB\"\n" + sd, "rejection = \"90 dB\": is given beside [sigma_delta]"},
		{sdBase + "rejection_mask = [[\"0 Hz\", \"90 dB\"]]\n" + sd, "rejection_mask = "},
		{sdBase + "[words]\ninput = 16\n" + sd, "words.input = 16: must equal sigma_delta.bits = 1"},
		{sdBase + "[sigma_delta]\norder = 9\nbits = 1\nsnr = 80\n", "sigma_delta.order = 9: must lie in [1, 8]"},
		{sdBase + "[sigma_delta]\norder = 4\nbits = 6\nsnr = 80\n", "sigma_delta.bits = 6: must lie in [1, 5]"},
		{sdBase + "[sigma_delta]\norder = 4\nbits = 1\n", "sigma_delta.snr: missing"},
		{sdBase + "[sigma_delta]\norder = 4\nbits = 1\nsnr = \"120 dB\"\n", "sigma_delta.snr = \"120 dB\": an SNR of 120 dB cannot be had: the modulator's own noise in [0, passband] allows at most 91.05 dB"},
		{sdBase + sd + "zeros = [\"10 kHz\"]\n", "sigma_delta.zeros = [\"10 kHz\"]: make 2 NTF zeros"},
		{sdBase + sd + "zeros = [\"30 kHz\", \"1 kHz\"]\n", "must lie in [0 Hz, passband = 20000 Hz]"},
		{sdBase + sd + "obg = \"1.5 dB\"\n", "sigma_delta.obg = \"1.5 dB\": want the out-of-band gain as a plain number"},
		{sdBase + sd + "obg = 1\n", "sigma_delta.obg = 1: must lie in (1, 8]"},
		{strings.Replace(sdBase, `output_rate = "48 kS/s"`, `output_rate = "6.144 MS/s"`, 1) + sd, "sigma_delta = {...}: a noise-shaped converter feeds a decimation chain"},
		{sdBase + "sigma_delta = 3\n", "sigma_delta = 3: want a table [sigma_delta]"},
		{sdBase + sd + "order2 = 3\n", "sigma_delta.order2: unknown key"},
	} {
		_, err := Parse("sd.toml", []byte(c.text))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q:\n got %v\nwant it to contain %q", c.text, err, c.want)
		}
	}
}
