package mcm_test

import (
	"fmt"

	"github.com/stepdown-dsp/stepdown/chain/fixed/mcm"
)

func ExampleBuild() {
	// In CSD 7 takes one adder and 45 three; the graph builds 3, then
	// 45 = (3 << 4) - 3. -90 is -(45 << 1); 16 and 0 are wires.
	coefs := []int64{7, 45, -90, 16, 0}
	g, err := mcm.Build(coefs)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("CSD adders:", mcm.CSDAdders(coefs))
	fmt.Println("graph adders:", g.Adders(), "depth:", g.Depth())
	fmt.Print(g)
	p, _ := g.Eval(3)
	fmt.Println("times 3:", p)
	// Output:
	// CSD adders: 4
	// graph adders: 3 depth: 2
	// n1 = (n0 << 3) - n0 = 7 [depth 1]
	// n2 = (n0 << 1) + n0 = 3 [depth 1]
	// n3 = (n2 << 4) - n2 = 45 [depth 2]
	// c[0] = n1 = 7
	// c[1] = n3 = 45
	// c[2] = -(n3 << 1) = -90
	// c[3] = (n0 << 4) = 16
	// c[4] = 0
	// times 3: [21 135 -270 48 0]
}

func ExampleCSD() {
	// 45 = 64 - 16 - 4 + 1, least significant digit first.
	fmt.Println(mcm.CSD(45))
	// Output: [1 0 -1 0 -1 0 1]
}
