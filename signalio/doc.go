// Package signalio reads and writes recorded signals as integer codes, for
// running a user's capture through a planned decimation chain, and
// measures their spectra (Welch).
//
// Conventions:
//
//   - Samples are two's complement integer codes held in int64, one slice
//     per channel (Signal.Samples[channel][frame]). Signal.Bits is the
//     word width: every code lies in [-2^(Bits-1), 2^(Bits-1)-1] and full
//     scale is 2^(Bits-1). Codes are never scaled on the way in or out; a
//     writer refuses a code that does not fit the output width rather
//     than clip or shift it.
//   - One channel is a real signal; two are I/Q, channel 0 = I, channel 1
//     = Q, interleaved I before Q in WAV and raw files and written I,Q in
//     CSV. More channels are refused.
//   - Binary data is little-endian: WAV as RIFF defines it, raw by this
//     package's rule (int16 or int32, interleaved).
//   - Rates are in Hz. WAV records its rate (whole Hz); raw and CSV files
//     do not, and the caller states it (Options.RateHz).
//   - WAV: integer PCM of 16, 24 or 32 bits, plain (format tag 1) or
//     WAVE_FORMAT_EXTENSIBLE with the PCM subformat; unknown chunks are
//     skipped with their pad bytes; float, 8-bit (unsigned), A-law, mu-law
//     and other compressed formats, more than two channels, a block align
//     that does not match, a chunk longer than the file (truncated), and
//     anything not RIFF/WAVE (RIFX, RF64) are refused. The extensible
//     header's valid-bits field is not applied: codes come at the
//     container width. EncodeWAV writes plain PCM, the common practice for
//     one or two channels, with a LIST/INFO chunk saying the file is
//     stepdown planning data.
//   - CSV: one column (real) or two (I,Q) of decimal integers, comma
//     separated; an optional first line of names; '#' comment lines and
//     blank lines; the caller states the bit width the values are held
//     to (Format.Bits) and the rate.
//   - Choosing a format (Choose): .wav is WAV, .csv is CSV, .raw and .bin
//     are raw and need the sample type stated (int16 or int32, see
//     ParseFormat); any other extension needs the format stated; a stated
//     format that contradicts .wav or .csv is an error.
//   - Bounds: a reader takes at most MaxFrames (2^24) frames, or the
//     smaller Options.MaxFrames, and refuses a larger input with a
//     message before allocating its samples. A WAV header's lengths are
//     checked against the real size of the input before anything is
//     allocated from them; binary data is read in blocks of 64 Ki
//     frames, CSV one line (at most 4096 bytes) at a time.
//   - Errors are one line: the file's name, then the rule broken, in the
//     user's words (for example "capture.wav: the data chunk says 4000000
//     bytes but only 1024 follow (truncated file)"). Readers never panic.
//   - Encoders write to an io.Writer (Encode) or return bytes (Marshal);
//     the caller owns the file and can replace it atomically. The bytes
//     depend only on the signal and the format.
//   - Spectra (Welch) are in dBFS per bin: 0 dBFS is a full-scale sine
//     (real signal) or a full-scale complex tone (I/Q) centred on a bin.
//     Welch lives here, beside the codes and their full scale, so that
//     package plots keeps drawing plain numbers only.
//
// Files written here are planning data: a bit-true simulation of the RTL
// and the team's own sign-off decide whether a chain is fit for hardware.
package signalio
