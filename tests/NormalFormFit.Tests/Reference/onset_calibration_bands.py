# Binomial acceptance bands of the onset calibration tests (Analysis/BottleneckBiasTests.cs, Analysis/CalibrationMatrixTests.cs).
# Run with Debian's /usr/bin/python3 (SciPy 1.10.1):  /usr/bin/python3 onset_calibration_bands.py
# Coverage of a 95% interval in n repeats: the central 99% of Binomial(n, 0.95), binom.ppf(0.005 / 0.995, n, 0.95).
# Sign balance (estimates above the truth) of an unbiased estimator: the central 99% of Binomial(n, 0.5).
import scipy
from scipy.stats import binom

print("scipy", scipy.__version__)
for n in (40, 48, 60, 80, 100, 200):
    print(n, "coverage", int(binom.ppf(0.005, n, 0.95)), int(binom.ppf(0.995, n, 0.95)),
          "sign", int(binom.ppf(0.005, n, 0.5)), int(binom.ppf(0.995, n, 0.5)))
