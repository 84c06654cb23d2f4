"""Independent returns of R's datasets::EuStockMarkets (DAX, SMI, CAC, FTSE closing prices, 1991-1998) with numpy.

Reads the CSV fixture written by export_eustockmarkets.R and writes, per index, the log returns
diff(log(p)) and the simple returns p_t / p_{t-1} - 1 over consecutive rows, dated by the later row.
Run with Debian's interpreter: /usr/bin/python3 tests/reference/eustock_logreturns.py
"""
import json
import pathlib

import numpy as np

here = pathlib.Path(__file__).resolve().parent
source = here.parent / "fixtures" / "imports" / "eustockmarkets.csv"
target = here / "fixtures" / "eustockmarkets_returns.json"

with source.open() as handle:
    header = handle.readline().strip().split(",")
rows = np.genfromtxt(source, delimiter=",", skip_header=1, dtype=str)
dates = [str(d) for d in rows[:, 0]]
prices = rows[:, 1:].astype(np.float64)

series = {}
for j, name in enumerate(header[1:]):
    p = prices[:, j]
    series[name] = {
        "log": np.diff(np.log(p)).tolist(),
        "simple": (p[1:] / p[:-1] - 1.0).tolist(),
    }

target.parent.mkdir(parents=True, exist_ok=True)
target.write_text(json.dumps({
    "source": "R datasets::EuStockMarkets via tests/reference/export_eustockmarkets.R; numpy " + np.__version__,
    "dates": dates[1:],
    "series": series,
}))
print(f"wrote {len(dates) - 1} returns x {len(series)} series to {target}")
