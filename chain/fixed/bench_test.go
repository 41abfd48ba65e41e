package fixed

import (
	"fmt"
	"testing"
)

func BenchmarkMinCoefBits(b *testing.B) {
	for _, n := range []int{31, 101, 301} {
		taps := kaiserLowpass(n, 100e3, 1e6, 9)
		bands := lowpassBands(40e3, 100e3+4e6/float64(n), 1e6, 0, 0)
		fd := Deviations(taps, 1e6, bands, 0)
		for i := range bands {
			bands[i].MaxError = 1.5 * fd[i]
		}
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, _, err := MinCoefBits(taps, 1e6, bands, QuantSettings{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkBitTrue(b *testing.B) {
	c := testCascade()
	w, err := Plan(c, Words{}, Settings{})
	if err != nil {
		b.Fatal(err)
	}
	for _, n := range []int{1024, 4096} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, err := BitTrue(c, w, Signal{Samples: n}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
