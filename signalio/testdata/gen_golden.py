#!/usr/bin/python3
"""Golden data for package signalio, made with Python's standard `wave`
module, scipy.io.wavfile and scipy.signal.welch (Debian's python3-scipy).

Run from the repository root with Debian's interpreter:

    /usr/bin/python3 signalio/testdata/gen_golden.py

It writes, under signalio/testdata/:

  wav/*.wav       small WAV files: 16/24/32-bit, mono and stereo, one with
                  an extra LIST chunk of odd length (so a pad byte), one
                  WAVE_FORMAT_EXTENSIBLE (built with struct, since neither
                  library writes one; scipy reads it back below)
  raw/*.raw       numpy's tofile of little-endian int16 / int32
  csv/*.csv       Python's csv module, with a comment and a header line
  golden.json     the integers each file holds, as scipy.io.wavfile.read
                  returns them (and, for the files it can read, `wave`
                  too, checked equal here), with the rate and format
  welch.json      a signal and scipy.signal.welch of it, several settings
  gowritten.json  what scipy.io.wavfile.read and `wave` read from the WAV
                  files the Go encoder wrote into gowritten/ (make them
                  with STEPDOWN_WRITE_GOLDEN=1 go test ./signalio -run
                  TestGoWritten, then run this script)

The signals are invented: a tone plus seeded noise, with the extreme codes
of each width placed at the start so that sign extension is exercised.
"""

import csv
import glob
import json
import os
import struct
import sys
import wave

import numpy as np
import scipy
import scipy.io.wavfile
import scipy.signal

HERE = os.path.dirname(os.path.abspath(__file__))


def codes(rng, n, bits, freq):
    """n codes of a tone at freq cycles/sample, 0.7 of full scale, plus
    noise, with the extreme codes first."""
    fs = 2 ** (bits - 1)
    t = np.arange(n)
    x = 0.7 * fs * np.sin(2 * np.pi * freq * t) + rng.normal(0, 0.05 * fs, n)
    x = np.clip(np.round(x), -fs, fs - 1).astype(np.int64)
    x[0], x[1], x[2], x[3] = -fs, fs - 1, -1, 0
    return x


def to_bytes(frames, bits):
    """Interleaved little-endian two's complement bytes of frames (n, ch)."""
    width = bits // 8
    out = bytearray()
    for v in frames.reshape(-1):
        out += int(v).to_bytes(width, "little", signed=True)
    return bytes(out)


def write_wave(path, frames, bits, rate):
    """Plain PCM with the standard library's wave module."""
    with wave.open(path, "wb") as w:
        w.setnchannels(frames.shape[1])
        w.setsampwidth(bits // 8)
        w.setframerate(rate)
        w.writeframes(to_bytes(frames, bits))


def chunk(cid, body):
    pad = b"\0" if len(body) % 2 else b""
    return cid + struct.pack("<I", len(body)) + body + pad


def riff(chunks):
    body = b"WAVE" + b"".join(chunks)
    return b"RIFF" + struct.pack("<I", len(body)) + body


def fmt_pcm(ch, rate, bits):
    return struct.pack("<HHIIHH", 1, ch, rate, rate * ch * bits // 8, ch * bits // 8, bits)


def fmt_extensible(ch, rate, bits, mask):
    guid = struct.pack("<H", 1) + bytes.fromhex("000000001000800000aa00389b71")
    return struct.pack("<HHIIHHHHI", 0xFFFE, ch, rate, rate * ch * bits // 8,
                       ch * bits // 8, bits, 22, bits, mask) + guid


def read_back(path):
    """What scipy reads, checked against wave where wave can read it."""
    rate, data = scipy.io.wavfile.read(path)
    if data.ndim == 1:
        data = data[:, None]
    ch = data.shape[1]
    bits = data.dtype.itemsize * 8
    # scipy returns 24-bit samples as int32 shifted left by 8 (its
    # documented convention for 24-bit PCM); undo that.
    with open(path, "rb") as f:
        raw = f.read()
    fmt_at = raw.index(b"fmt ")
    bits = struct.unpack("<H", raw[fmt_at + 22:fmt_at + 24])[0]
    vals = data.astype(np.int64)
    if bits == 24:
        vals = vals >> 8
    try:
        with wave.open(path, "rb") as w:
            wb = w.readframes(w.getnframes())
            width = w.getsampwidth()
            wv = np.array([int.from_bytes(wb[i:i + width], "little", signed=True)
                           for i in range(0, len(wb), width)], dtype=np.int64).reshape(-1, w.getnchannels())
            assert w.getframerate() == rate
            assert np.array_equal(wv, vals), path
            by = "scipy.io.wavfile and wave"
    except wave.Error:
        by = "scipy.io.wavfile (wave cannot read this header)"
    return {
        "rate": int(rate),
        "bits": int(bits),
        "channels": int(ch),
        "samples": [vals[:, c].tolist() for c in range(ch)],
        "read_by": by,
    }


def main():
    rng = np.random.default_rng(20240611)
    os.makedirs(os.path.join(HERE, "wav"), exist_ok=True)
    os.makedirs(os.path.join(HERE, "raw"), exist_ok=True)
    os.makedirs(os.path.join(HERE, "csv"), exist_ok=True)

    def stereo(n, bits):
        return np.stack([codes(rng, n, bits, 0.031), codes(rng, n, bits, 0.047)], axis=1)

    wavs = {}
    # Standard library wave: 16 and 24 bits, mono; 24-bit mono with an odd
    # frame count gives an odd data chunk and its pad byte.
    p = os.path.join(HERE, "wav", "pcm16_mono_wave.wav")
    write_wave(p, codes(rng, 257, 16, 0.02)[:, None], 16, 48000)
    wavs[p] = "wave module"
    p = os.path.join(HERE, "wav", "pcm24_mono_wave.wav")
    write_wave(p, codes(rng, 201, 24, 0.013)[:, None], 24, 96000)
    wavs[p] = "wave module"
    p = os.path.join(HERE, "wav", "pcm32_stereo_wave.wav")
    write_wave(p, stereo(150, 32), 32, 250000)
    wavs[p] = "wave module"
    # scipy.io.wavfile.write: int16 stereo and int32 mono (it writes no
    # 24-bit files).
    p = os.path.join(HERE, "wav", "pcm16_stereo_scipy.wav")
    scipy.io.wavfile.write(p, 1920000, stereo(300, 16).astype(np.int16))
    wavs[p] = "scipy.io.wavfile.write"
    p = os.path.join(HERE, "wav", "pcm32_mono_scipy.wav")
    scipy.io.wavfile.write(p, 8000, codes(rng, 120, 32, 0.1).astype(np.int32))
    wavs[p] = "scipy.io.wavfile.write"
    # Built with struct: an extra LIST chunk of odd length between fmt and
    # data (pad byte), and a JUNK chunk in front of fmt.
    fr = stereo(99, 24)
    body = b"INFOISFT" + struct.pack("<I", 7) + b"golden\0"  # 19 bytes: odd
    p = os.path.join(HERE, "wav", "pcm24_stereo_list.wav")
    with open(p, "wb") as f:
        f.write(riff([chunk(b"JUNK", b"\0" * 28), chunk(b"fmt ", fmt_pcm(2, 44100, 24)),
                      chunk(b"LIST", body), chunk(b"data", to_bytes(fr, 24))]))
    wavs[p] = "struct (JUNK and odd-length LIST chunks)"
    # WAVE_FORMAT_EXTENSIBLE, PCM subformat, 24 bits stereo and 16 mono.
    p = os.path.join(HERE, "wav", "ext24_stereo.wav")
    with open(p, "wb") as f:
        f.write(riff([chunk(b"fmt ", fmt_extensible(2, 192000, 24, 3)),
                      chunk(b"data", to_bytes(stereo(64, 24), 24))]))
    wavs[p] = "struct (WAVE_FORMAT_EXTENSIBLE)"
    p = os.path.join(HERE, "wav", "ext16_mono.wav")
    with open(p, "wb") as f:
        f.write(riff([chunk(b"fmt ", fmt_extensible(1, 16000, 16, 4)),
                      chunk(b"data", to_bytes(codes(rng, 77, 16, 0.2)[:, None], 16))]))
    wavs[p] = "struct (WAVE_FORMAT_EXTENSIBLE)"

    golden = {
        "made_by": "signalio/testdata/gen_golden.py",
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "wav": {},
        "raw": {},
        "csv": {},
    }
    for p, how in sorted(wavs.items()):
        d = read_back(p)
        d["written_by"] = how
        golden["wav"][os.path.basename(p)] = d

    # Raw: numpy tofile with explicit little-endian dtypes.
    for name, bits, ch, n in [("int16_stereo.raw", 16, 2, 100), ("int32_mono.raw", 32, 1, 90)]:
        fr = stereo(n, bits) if ch == 2 else codes(rng, n, bits, 0.05)[:, None]
        fr.astype("<i%d" % (bits // 8)).tofile(os.path.join(HERE, "raw", name))
        golden["raw"][name] = {"bits": bits, "channels": ch, "samples": [fr[:, c].tolist() for c in range(ch)]}

    # CSV with the standard csv module: a comment, a header, I,Q rows.
    fr = stereo(50, 12)
    name = "iq12_header.csv"
    with open(os.path.join(HERE, "csv", name), "w", newline="") as f:
        f.write("# invented I/Q capture, 12-bit codes\n")
        w = csv.writer(f, lineterminator="\r\n")
        w.writerow(["I", "Q"])
        w.writerows(fr.tolist())
    golden["csv"][name] = {"bits": 12, "channels": 2, "samples": [fr[:, c].tolist() for c in range(2)]}
    fr = codes(rng, 40, 16, 0.1)
    name = "real16_plain.csv"
    with open(os.path.join(HERE, "csv", name), "w", newline="") as f:
        csv.writer(f, lineterminator="\n").writerows([[v] for v in fr.tolist()])
    golden["csv"][name] = {"bits": 16, "channels": 1, "samples": [fr.tolist()]}

    with open(os.path.join(HERE, "golden.json"), "w") as f:
        json.dump(golden, f, indent=1)
        f.write("\n")

    # Welch: scipy.signal.welch with noverlap = nperseg // 2, no detrend,
    # scaling "spectrum", on codes / 2^(bits-1); dB relative to a
    # full-scale sine (power 1/2) for a real signal, a full-scale complex
    # tone (power 1) for I/Q. The two-sided spectrum is fft-shifted.
    bits, n, rate = 16, 3000, 1e6
    x = codes(rng, n, bits, 0.1234)
    q = codes(rng, n, bits, 0.2345)
    cases = []
    for window in ["blackmanharris", "hann"]:
        for nperseg in [256, 255]:
            f_, p_ = scipy.signal.welch(x / 2 ** (bits - 1), fs=rate, window=window, nperseg=nperseg,
                                        noverlap=nperseg // 2, detrend=False, scaling="spectrum")
            cases.append({"window": window, "nperseg": nperseg, "channels": 1,
                          "hz": f_.tolist(), "db": (10 * np.log10(p_ / 0.5)).tolist()})
        z = (x + 1j * q) / 2 ** (bits - 1)
        f_, p_ = scipy.signal.welch(z, fs=rate, window=window, nperseg=128, noverlap=64, detrend=False,
                                    scaling="spectrum", return_onesided=False)
        f_, p_ = np.fft.fftshift(f_), np.fft.fftshift(p_)
        cases.append({"window": window, "nperseg": 128, "channels": 2,
                      "hz": f_.tolist(), "db": (10 * np.log10(p_)).tolist()})
    with open(os.path.join(HERE, "welch.json"), "w") as f:
        json.dump({"made_by": "signalio/testdata/gen_golden.py", "scipy": scipy.__version__,
                   "bits": bits, "rate": rate, "i": x.tolist(), "q": q.tolist(), "cases": cases}, f)
        f.write("\n")

    # What the reference readers make of the Go encoder's files.
    gw = {"made_by": "signalio/testdata/gen_golden.py", "scipy": scipy.__version__,
          "python": sys.version.split()[0], "files": {}}
    for p in sorted(glob.glob(os.path.join(HERE, "gowritten", "*.wav"))):
        gw["files"][os.path.basename(p)] = read_back(p)
    with open(os.path.join(HERE, "gowritten.json"), "w") as f:
        json.dump(gw, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
