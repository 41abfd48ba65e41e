// Package units parses the quantities a stepdown user types: frequencies and
// sample rates in Hz, and levels in dB.
//
// Conventions:
//
//   - A plain number is in the base unit: "45" is 45 Hz, "85" is 85 dB.
//   - A number may be followed, with or without spaces, by a unit:
//     Hz, kHz, MHz, GHz for frequencies; for sample rates (ParseRate) those
//     or the trade's S/s, kS/s, MS/s, GS/s and sps, ksps, Msps, Gsps ("sps"
//     in any case, the prefixes as for Hz but M and G upper case): "100 MS/s"
//     is "100 MHz"; and dB for levels. A frequency written in a sample-rate
//     unit is refused with the reason (a band edge is not a rate).
//   - Case: the "Hz" and "dB" parts may be written in any case ("hz", "HZ",
//     "db", "DB"). The prefix k may be k or K, G may be g or G, but M must be
//     upper case: in SI "mHz" is the millihertz, and reading it as megahertz
//     would silently be off by 10^9, so "mHz" and "mhz" are rejected with a
//     message that says so.
//   - A bare prefix ("1.2 M", "45k") is rejected: the unit must be spelled out.
//   - Numbers are decimal ("1.2", ".5", "1e6", "-3"); hexadecimal, underscores,
//     NaN and infinities are rejected, and so is any value that overflows.
//
// The parser does not judge the sign or range of a value: that depends on the
// field, and the caller's error names the field.
package units
