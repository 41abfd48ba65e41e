//go:build !amd64 || purego

package remez

const haveAVX2 = false

func baryAVX2(x float64, xr, mu, c *float64, n int) (num, den float64) {
	panic("remez: no vector kernel on this platform")
}
