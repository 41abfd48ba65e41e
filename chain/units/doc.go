// Package units parses the quantities a stepdown user types: frequencies and
// sample rates in Hz, and levels in dB.
//
// Conventions:
//
//   - A plain number is in the base unit: "45" is 45 Hz, "85" is 85 dB.
//   - A number may be followed, with or without spaces, by a unit:
//     Hz, kHz, MHz, GHz for frequencies (a sample rate in S/s is written in Hz:
//     "122.88 MHz"), and dB for levels.
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
