package report

import (
	"fmt"
	"io"
	"slices"

	"github.com/stepdown-dsp/stepdown/chain"
)

// BlockMemoryBits is the size from which a stage's memory is counted as
// block memory rather than registers: memories of a kilobit or less are
// commonly built from registers or LUT memory, larger ones from the
// fabric's block RAMs of 18 to 36 kbit (common practice; the vendor's tools
// decide).
const BlockMemoryBits = 1024

// Resources is a chain's bill of fabric resources at the clock, a planning
// estimate in the units the fabric charges: Multipliers are the native
// blocks (hardware_multipliers) when the spec gives a multiplier size,
// else the multipliers at the clock; Adders are the adds per second over
// the clock, per stage, rounded up; AdderBits is the widest adder (a FIR's
// accumulator, a CIC's widest register; 0 when the word lengths are not
// planned); RegisterBits and BlockMemoryBits split the memory (a CIC's
// registers always count as registers; a FIR or half-band stage's data and
// coefficient memory as block memory from BlockMemoryBits up); Lanes as
// cost.Lanes. A multiplierless chain (Chain.Adders set) has no
// multipliers, and its Adders are each stage's adders as built
// (Stage.Adders), with a FIR or half-band stage's split into
// CoefficientAdders and StructuralAdders.
type Resources struct {
	Multipliers     int              `json:"multipliers"`
	Adders          int              `json:"adders"`
	RegisterBits    int              `json:"register_bits"`
	BlockMemoryBits int              `json:"block_memory_bits"`
	Lanes           int              `json:"parallel_lanes"`
	Stages          []StageResources `json:"stages"`
}

// StageResources is one stage's share of Resources.
type StageResources struct {
	Stage           int    `json:"stage"` // from 1
	Kind            string `json:"kind"`
	Lanes           int    `json:"parallel_lanes"`
	Multipliers     int    `json:"multipliers"`
	Adders          int    `json:"adders"`
	AdderBits       int    `json:"adder_bits"`
	RegisterBits    int    `json:"register_bits"`
	BlockMemoryBits int    `json:"block_memory_bits"`
	// Multiplierless only (absent otherwise): a FIR or half-band stage's
	// Adders split into its adder graphs' and its tap sums', over its
	// lanes and real filters.
	CoefficientAdders *int `json:"coefficient_adders,omitempty"`
	StructuralAdders  *int `json:"structural_adders,omitempty"`
}

// NewResources is c's bill of resources at a clock of clock Hz, for a
// chain whose channel side (the output of a decimation chain, the input of
// an interpolation chain, the rate its counts are per sample of) runs at
// outRate samples per second and that runs
// paths real data paths (2 for I/Q, which doubles every stage's data
// memory, not its coefficients); nil without a clock.
func NewResources(c *Chain, clock, outRate float64, paths int) *Resources {
	if !(clock > 0) {
		return nil
	}
	r := &Resources{Lanes: 1}
	for i, st := range c.Stages {
		sr := StageResources{Stage: i + 1, Kind: st.Kind, Lanes: 1}
		if st.CICForm == "nonrecursive" {
			sr.Kind = "cic (non-recursive)"
		}
		if st.ParallelLanes != nil {
			sr.Lanes = *st.ParallelLanes
		}
		if st.Multipliers != nil {
			sr.Multipliers = *st.Multipliers
		}
		sr.Adders = chain.PerCycle(st.AddsPerOutput*outRate, clock)
		if c.Adders != nil && st.Adders != nil {
			// Multiplierless: the stage's adders as built (its graphs and
			// tap sums are wired to their constants, not time-shared).
			sr.Adders = *st.Adders
			if st.CoefficientAdders != nil && st.StructuralAdders != nil {
				// Adders is one block's times its lanes and real filters.
				ca, sa := 0, 0
				if b := *st.CoefficientAdders + *st.StructuralAdders; b > 0 {
					k := *st.Adders / b
					ca, sa = *st.CoefficientAdders*k, *st.StructuralAdders*k
				}
				sr.CoefficientAdders, sr.StructuralAdders = &ca, &sa
			}
		}
		mem := st.MemoryBits
		if w := st.StageReport; w != nil {
			if w.HardwareMultipliers != nil {
				sr.Multipliers = *w.HardwareMultipliers
			}
			sr.AdderBits = w.AccumulatorBits
			if len(w.RegisterBits) > 0 {
				sr.AdderBits = slices.Max(w.RegisterBits)
			}
			// A FIR's memory at its planned widths (its delay line once
			// per data path); a CIC's is the pricing's, which counts its
			// integrators once per lane and both paths.
			if st.Kind != "cic" && w.DataMemoryBits+w.CoefMemoryBits > 0 {
				mem = w.DataMemoryBits*max(paths, 1) + w.CoefMemoryBits
			}
		} else if len(st.RegisterBits) > 0 {
			sr.AdderBits = slices.Max(st.RegisterBits)
		}
		if st.Kind == "cic" || mem <= BlockMemoryBits {
			sr.RegisterBits = mem
		} else {
			sr.BlockMemoryBits = mem
		}
		if c.Adders != nil {
			sr.Multipliers = 0 // multiplierless
		}
		r.Multipliers += sr.Multipliers
		r.Adders += sr.Adders
		r.RegisterBits += sr.RegisterBits
		r.BlockMemoryBits += sr.BlockMemoryBits
		r.Lanes = max(r.Lanes, sr.Lanes)
		r.Stages = append(r.Stages, sr)
	}
	return r
}

// WriteResources writes the recommended (or checked) chain's Resources as
// a table, or says that they need a clock.
func WriteResources(w io.Writer, rep *Report) {
	if len(rep.Front) == 0 {
		return
	}
	ch := rep.Front[rep.Recommended]
	res := ch.Resources
	if res == nil {
		fmt.Fprintln(w, "\nresources: give hardware.clock for the bill of resources at the clock")
		return
	}
	fmt.Fprintf(w, "\nresources of %s at the clock (a planning estimate; the vendor's tools decide):\n", ch.Notation)
	ml := ch.Adders != nil
	head := []string{"stage", "kind", "lanes", "multipliers", "adders", "adder bits", "register bits", "block memory bits"}
	if ml {
		head = slices.Insert(head, 5, "graph adders", "tap adders")
	}
	rows := [][]string{head}
	var ga, ta int
	for _, s := range res.Stages {
		bits := "-"
		if s.AdderBits > 0 {
			bits = fmt.Sprint(s.AdderBits)
		}
		row := []string{fmt.Sprint(s.Stage), s.Kind, fmt.Sprint(s.Lanes), fmt.Sprint(s.Multipliers), fmt.Sprint(s.Adders),
			bits, fmt.Sprint(s.RegisterBits), fmt.Sprint(s.BlockMemoryBits)}
		if ml {
			g, t := "-", "-"
			if s.CoefficientAdders != nil && s.StructuralAdders != nil {
				g, t = fmt.Sprint(*s.CoefficientAdders), fmt.Sprint(*s.StructuralAdders)
				ga, ta = ga+*s.CoefficientAdders, ta+*s.StructuralAdders
			}
			row = slices.Insert(row, 5, g, t)
		}
		rows = append(rows, row)
	}
	total := []string{"total", "", fmt.Sprint(res.Lanes), fmt.Sprint(res.Multipliers), fmt.Sprint(res.Adders), "",
		fmt.Sprint(res.RegisterBits), fmt.Sprint(res.BlockMemoryBits)}
	if ml {
		total = slices.Insert(total, 5, fmt.Sprint(ga), fmt.Sprint(ta))
	}
	rows = append(rows, total)
	WriteAligned(w, "  ", rows, func(i int) bool { return i >= 2 })
	if ml {
		fmt.Fprintln(w, "  multiplierless: adders are as built (not time-shared); graph adders multiply by the taps (a shared adder graph), tap adders sum them (transposed direct form)")
	}
}
