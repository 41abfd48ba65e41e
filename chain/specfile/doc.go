// Package specfile reads a stepdown spec: a TOML file that says what a
// decimation chain must do and how to search for it, and maps it onto
// chain.Spec, cost.Settings and optimize.Settings.
//
// Conventions: rates and frequencies are in Hz, written as plain numbers or as
// strings with a unit ("245.76 MHz", see package units); ripple is
// peak-to-peak dB over the passband, rejection is positive dB. A key the
// format does not define is an error that names the key and its line, so a
// misspelt option is never silently ignored; keys are case-sensitive.
//
// Every error names the file, the line when known, the key, the value and the
// rule it breaks. Band rules (which edge may lie where) are checked by
// chain.Spec.Normalize; this package checks types, units, word lengths and the
// search limits, and the file itself (missing, unreadable, a folder, not TOML,
// over MaxFileSize). Before the text is decoded it is measured (MaxFileSize,
// MaxDepth, MaxItems, no integers in another base than ten), so that any
// text, however made, costs little to refuse. Values repeated in messages
// are cut to units.MaxEcho characters, and the library's messages are said
// in the spec's terms (InFileTerms).
package specfile
