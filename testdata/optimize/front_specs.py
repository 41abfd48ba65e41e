"""Write the invented specs of front_compare.sh into the folder given.

Usage: front_specs.py DIR [narrow]

Ten hand-made receivers and thirty seeded random ones (ratios 6 to 3000,
output rates 48 kHz to 10 MHz, passbands 15-42% of the output rate,
ripple 0.01-1 dB, rejection 50-100 dB, real or I/Q, some with fixed
coefficient widths). All invented for this comparison.

With "narrow", a family of fixed coefficient widths near the target's own
instead (where what rounding costs a design is all but chance): seven
invented receivers at a range of rejection targets, and twenty seeded
random ones whose width is about a bit per 6.5 dB of rejection.
"""
import os
import random
import sys

out = sys.argv[1]
narrow = len(sys.argv) > 2 and sys.argv[2] == "narrow"


def spec(name, fin, fout, pb, rip, rej, sig, coef=None, protected=None, inbits=14, outbits=20):
    with open(os.path.join(out, name + ".toml"), "w") as f:
        f.write('input_rate = "%s"\noutput_rate = "%s"\npassband = "%s"\n' % (fin, fout, pb))
        if protected:
            f.write('protected = "%s"\n' % protected)
        f.write('ripple = "%s"\nrejection = "%s"\nsignal = "%s"\n' % (rip, rej, sig))
        if coef:
            f.write("[words]\ninput = %d\noutput = %d\ncoefficients = %d\n" % (inbits, outbits, coef))


if narrow:
    for rej in range(72, 83):
        spec("n50_%d" % rej, "50 MHz", "2 MHz", "750 kHz", "0.1 dB", "%d dB" % rej, "real", 12, outbits=22)
    for rej in range(59, 73):
        spec("n64iq_%d" % rej, "64 MHz", "4 MHz", "1.5 MHz", "0.05 dB", "%d dB" % rej, "complex", 10,
             protected="1.6 MHz")
    for rej in range(60, 75, 2):
        spec("n40_%d" % rej, "40 MHz", "5 MHz", "1.8 MHz", "0.05 dB", "%d dB" % rej, "real", 10)
    for rej in range(62, 73, 2):
        spec("n80_%d" % rej, "80 MHz", "2.5 MHz", "1 MHz", "0.1 dB", "%d dB" % rej, "real", 10)
    for rej in range(74, 81, 2):
        spec("n120_%d" % rej, "120 MHz", "0.96 MHz", "360 kHz", "0.2 dB", "%d dB" % rej, "real", 12,
             outbits=22)
    for rej in range(58, 67, 2):
        spec("n60_%d" % rej, "60 MHz", "1.5 MHz", "500 kHz", "0.1 dB", "%d dB" % rej, "real", 10)
    for rej in range(62, 71, 2):
        spec("n96iq_%d" % rej, "96 MHz", "3 MHz", "1.1 MHz", "0.2 dB", "%d dB" % rej, "complex", 11,
             inbits=12, outbits=18)
    r = random.Random(20261204)
    for i in range(20):
        d = r.choice([8, 10, 12, 16, 20, 24, 25, 32, 40, 48, 50, 64, 80, 100, 128])
        fout = r.choice([0.5e6, 1e6, 1.5e6, 2e6, 4e6])
        pb = fout * r.uniform(0.2, 0.4)
        rip = r.choice([0.05, 0.1, 0.2, 0.5])
        rej = r.randint(55, 85)
        coef = int(round(rej / 6.5)) + r.choice([0, 1])
        spec("nr%02d" % i, "%.6g kHz" % (fout * d / 1e3), "%.6g kHz" % (fout / 1e3), "%.6g kHz" % (pb / 1e3),
             "%g dB" % rip, "%d dB" % rej, r.choice(["real", "complex"]), coef)
    sys.exit(0)


spec("d4096", "122.88 MHz", "30 kHz", "10 kHz", "0.1 dB", "90 dB", "real")
spec("d4096_80dB", "122.88 MHz", "30 kHz", "10 kHz", "0.1 dB", "80 dB", "real")
spec("d1000_complex", "100 MHz", "100 kHz", "35 kHz", "0.2 dB", "85 dB", "complex", 18)
spec("d65536", "65.536 MHz", "1 kHz", "300 Hz", "0.1 dB", "90 dB", "real")
spec("d2to20", "1048.576 MHz", "1 kHz", "300 Hz", "0.1 dB", "90 dB", "real")
spec("d96", "96 MHz", "1 MHz", "300 kHz", "0.05 dB", "80 dB", "complex")
spec("d240", "245.76 MHz", "1.024 MHz", "400 kHz", "0.2 dB", "75 dB", "real")
spec("d640", "64 MHz", "100 kHz", "20 kHz", "0.5 dB", "100 dB", "real", 16)
spec("d12", "12 MHz", "1 MHz", "450 kHz", "0.01 dB", "70 dB", "complex")
spec("d1536", "153.6 MHz", "100 kHz", "40 kHz", "0.1 dB", "95 dB", "complex")

r = random.Random(20261203)
for i in range(30):
    d = r.choice([6, 8, 10, 12, 16, 20, 24, 25, 32, 40, 48, 50, 60, 64, 80, 96, 100, 120, 128, 160,
                  200, 256, 320, 384, 500, 512, 640, 1000, 1024, 2000, 2048, 3000])
    fout = r.choice([48e3, 100e3, 200e3, 1e6, 1.92e6, 3.84e6, 10e6])
    fin = fout * d
    pb = fout * r.uniform(0.15, 0.42)
    rip = r.choice([0.01, 0.05, 0.1, 0.2, 0.5, 1.0])
    rej = r.choice([50, 60, 70, 80, 90, 100])
    sig = r.choice(["real", "complex"])
    words = r.random() < 0.3
    coef = r.choice([14, 16, 18]) if words else None
    spec("r%02d" % i, "%.6g kHz" % (fin / 1e3), "%.6g kHz" % (fout / 1e3), "%.6g kHz" % (pb / 1e3),
         "%g dB" % rip, "%g dB" % rej, sig, coef)
