package sigmadelta

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain/fixed"
)

// Shaper returns the modulator as the bit-true run's converter
// (fixed.Shaper): its encoders are NewEncoder's, its test tone the
// ToneDBFS tone in the input word (ToneWordDBFS), its predicted SNR
// PredictedSNR's.
func (m Modulator) Shaper() (fixed.Shaper, error) {
	if _, err := m.NTF(); err != nil {
		return nil, err
	}
	return shaper{m}, nil
}

type shaper struct{ m Modulator }

func (s shaper) NewEncoder(seed uint64) (fixed.Encoder, error) {
	e, err := s.m.NewEncoder(seed)
	if err != nil {
		return nil, err
	}
	return e, nil
}

func (s shaper) ToneDBFS() float64 { return s.m.ToneWordDBFS() }

func (s shaper) PredictedSNR(gain func(g float64) float64, inputRate, outputRate, passband float64) (float64, error) {
	return s.m.PredictedSNR(gain, Rates{InputRate: inputRate, OutputRate: outputRate, Passband: passband})
}

func (s shaper) String() string {
	return fmt.Sprintf("%s (%g dBFS of the modulator's full scale)", s.m, float64(ToneDBFS))
}
