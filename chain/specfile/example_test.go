package specfile_test

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain/specfile"
)

func ExampleParse() {
	s, err := specfile.Parse("spec.toml", []byte(`
input_rate  = "245.76 MHz"
output_rate = "1.92 MHz"
passband    = "600 kHz"
ripple      = "0.1 dB"
rejection   = "85 dB"
`))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Chain.Decimation(), s.Chain.Protected, s.Chain.Stopband, s.Signal, s.MaxStages)

	_, err = specfile.Parse("spec.toml", []byte("input_rate = \"245.76 MHz\"\nouput_rate = \"1.92 MHz\"\n"))
	fmt.Println(err)
	// Output:
	// 128 600000 1.32e+06 real 6
	// spec.toml:2: ouput_rate: unknown key (did you mean "output_rate"?)
}
