# Chi-square quantiles by SciPy: stdin lines "dof p", stdout one quantile per line.
import sys
from scipy.stats import chi2

for line in sys.stdin:
    if line.strip():
        dof, p = line.split()
        print(repr(float(chi2.ppf(float(p), int(dof)))))
