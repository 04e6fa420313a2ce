"""Reference check: are the values in a JSON list uniform on (0, 1)?
One-sample Kolmogorov-Smirnov test, scipy.stats.kstest(values, "uniform")
(python3-scipy). Exit 0 when the KS p-value exceeds the threshold given as
the second argument (the issue's 0.01), printing the statistic and p."""
import json
import sys

from scipy.stats import kstest

values = json.load(open(sys.argv[1]))
threshold = float(sys.argv[2])
res = kstest(values, "uniform")
print(f"KS against uniform: n = {len(values)}, D = {res.statistic:.4f}, p = {res.pvalue:.4f} (need > {threshold})")
sys.exit(0 if res.pvalue > threshold else 1)
