# Binomial acceptance bands of the compare calibration tests (Compare/CalibrationTests.cs).
# Run with Debian's /usr/bin/python3 (SciPy 1.10.1):  /usr/bin/python3 compare_calibration_bands.py
import scipy
from scipy.stats import binom

print("scipy", scipy.__version__)
n = 40
print("P(rejections >= 6 | n=40, p=0.05) =", round(binom.sf(5, n, 0.05), 4))   # 0.0139
print("P(covered <= 34 | n=40, p=0.95) =", round(binom.cdf(34, n, 0.95), 4))   # 0.0139
# Monte-Carlo p-values with B = 19 are uniform on {1/20, ..., 1}: mean 0.525, SD sqrt((20**2 - 1)/12)/20.
sd = ((20 ** 2 - 1) / 12) ** 0.5 / 20
print("SD of one p-value =", round(sd, 4), "; SD of the mean of 40 =", round(sd / n ** 0.5, 4))
