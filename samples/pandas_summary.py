#!/usr/bin/env python3
"""The pandas side of samples/bench.sh: read a canonical fleet CSV with pandas and compute, for
every port and every measured column, the order statistics triage computes for every quantity of
every port (minimum, 1st percentile, median, 99th percentile, maximum).

    python3 samples/pandas_summary.py out/fleet.csv

Prints the rows, ports and summary cells. Exits with status 3 when pandas is not installed;
bench.sh then skips the comparison.
"""
import sys

try:
    import pandas as pd
except ImportError:
    sys.exit(3)


def main():
    df = pd.read_csv(sys.argv[1])
    df["time"] = pd.to_datetime(df["time"], utc=True)
    df = df.sort_values(["port", "time"], kind="stable")
    measured = [c for c in df.columns if c not in ("time", "port")]
    summary = df.groupby("port", sort=True)[measured].quantile([0.0, 0.01, 0.5, 0.99, 1.0])
    print(f"rows {len(df)}, ports {df['port'].nunique()}, summary cells {summary.size}")


main()
