package farrow_test

import (
	"context"
	"fmt"
	"log"

	"github.com/stepdown-dsp/stepdown/chain/farrow"
)

// A fractional-rate stage for an invented receiver: the channel occupies
// the lowest tenth of the input rate, and everything that would alias onto
// [-0.15, 0.15] after resampling must be 80 dB down.
func ExampleMinDesign() {
	f, r, err := farrow.MinDesign(context.Background(), 0.1, 0.15, 1e-4, 1e-4, 200)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("degree %d, length %d, %d multiplies per output\n", f.Degree(), f.Len(), r.Cost)
	fmt.Printf("meets: %v (|H-1| <= %.1e, |H| <= %.1e on stopbands k = 1..%d and the tail beyond)\n", r.Meets, r.PassDev, r.StopDev, r.Bands)

	// Resample a slow ramp by 4/3: outputs every 0.75 input samples.
	x := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	y := f.Run(x, []float64{4, 4.75, 5.5})
	fmt.Printf("%.2f %.2f %.2f\n", y[0], y[1], y[2])
	// Output:
	// degree 3, length 6, 27 multiplies per output
	// meets: true (|H-1| <= 7.1e-05, |H| <= 7.3e-05 on stopbands k = 1..25 and the tail beyond)
	// 4.00 4.75 5.50
}
