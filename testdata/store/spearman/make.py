# Writes values.json: Spearman's rho of each case computed by
# scipy.stats.spearmanr, and the 0.25/0.75 quantiles by numpy.quantile
# (default linear method). Run with Debian's python3-scipy:
#   /usr/bin/python3 make.py > values.json
import json, sys
import numpy, scipy
from scipy.stats import spearmanr

cases = {
    "no_ties": ([1, 2, 3, 4, 5, 6, 7, 8], [2.1, 3.9, 3.0, 6.2, 5.5, 8.8, 7.1, 9.4]),
    "ties_in_x": ([950, 950, 1000, 1000, 1000, 1035, 1035, 1050], [0.42, 0.51, 0.66, 0.71, 0.63, 0.88, 0.93, 0.97]),
    "ties_in_both": ([10, 20, 20, 30, 30, 30, 40, 50, 50], [1, 1, 2, 3, 3, 2, 5, 4, 4]),
    "negative": ([5, 10, 15, 20, 25, 30], [900, 610, 620, 300, 210, 150]),
    "growth_runs": ([980, 1000, 1000, 1020, 1035, 1035, 1035, 1050, 1060, 990],
                    [0.61, 0.72, 0.70, 0.85, 0.91, 0.89, 0.95, 0.97, 0.96, 0.64]),
}
out = {"scipy": scipy.__version__, "numpy": numpy.__version__, "cases": []}
for name, (x, y) in cases.items():
    rho = spearmanr(x, y).statistic
    out["cases"].append({"name": name, "x": x, "y": y, "rho": float(rho),
                         "q25": float(numpy.quantile(y, 0.25)), "q75": float(numpy.quantile(y, 0.75))})
json.dump(out, sys.stdout, indent=1)
print()
