package specfile

// ExampleName is how the built-in example is named in messages and reports.
const ExampleName = "built-in example"

// ExampleText is the built-in example spec, planned when `stepdown plan` is
// given no file. It is an invented scenario: a wideband 16-bit ADC sampling at
// 122.88 MS/s, one narrowband complex (I/Q) channel delivered at 1.92 MS/s
// (decimation 64), with 480 kHz flat and alias-free protection to 640 kHz.
// The same text is committed as testdata/specs/example.toml.
const ExampleText = `# stepdown built-in example (an invented scenario):
# a 16-bit ADC at 122.88 MS/s feeding one 1.92 MS/s I/Q channel.
input_rate  = "122.88 MHz"   # ADC sample rate
output_rate = "1.92 MHz"     # channel rate; 122.88 / 1.92 = 64
passband    = "480 kHz"      # flat to here
protected   = "640 kHz"      # no alias may land below this edge
ripple      = "0.2 dB"       # peak-to-peak over the passband
rejection   = "90 dB"        # alias rejection into the protected band
signal      = "complex"      # I and Q: two real filters

[words]
input = 16
output = 24
coefficients = 18

[hardware]
clock = "245.76 MHz"

[cost]
symmetry = true

[search]
max_stages = 5
kinds = ["cic", "halfband", "fir"]
cic_orders = [3, 4, 5, 6]
cic_delays = [1]
`

// Example returns the built-in example spec, parsed.
func Example() (*Spec, error) { return Parse(ExampleName, []byte(ExampleText)) }
