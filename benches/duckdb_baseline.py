"""The DuckDB baseline for the ingest bench (benches/bench.rs runs it when `import duckdb` works).

One pass over the logger file as an analytical engine does it: `read_csv` of the whole file and the
hourly means of the four channels (`GROUP BY` hour). Timed best of 3, each on a fresh in-memory
connection so nothing is cached between runs. Prints `best_seconds=...` for the bench to read.

Usage: python3 benches/duckdb_baseline.py FILE.csv
"""

import sys
import time

import duckdb

QUERY = """
SELECT date_trunc('hour', "Time") AS hour,
       avg("C1 kW") AS c1_kw, avg("C2 kW") AS c2_kw,
       avg("Header bar") AS header_bar_g, avg("Flow m3/min") AS flow_m3_min,
       count(*) AS n
FROM read_csv(?, header = true, delim = ',',
              columns = {'Time': 'TIMESTAMPTZ', 'C1 kW': 'DOUBLE', 'C2 kW': 'DOUBLE',
                         'Header bar': 'DOUBLE', 'Flow m3/min': 'DOUBLE'})
GROUP BY hour
ORDER BY hour
"""


def one_pass(path):
    con = duckdb.connect(":memory:")
    con.execute("SET TimeZone = 'UTC'")
    t = time.perf_counter()
    rows = con.execute(QUERY, [path]).fetchall()
    took = time.perf_counter() - t
    con.close()
    return took, rows


def main():
    if len(sys.argv) != 2:
        sys.exit("usage: duckdb_baseline.py FILE.csv")
    path = sys.argv[1]
    times = []
    rows = []
    for _ in range(3):
        took, rows = one_pass(path)
        times.append(took)
    n = sum(r[-1] for r in rows)
    threads = duckdb.connect(":memory:").execute("SELECT current_setting('threads')").fetchone()[0]
    print(f"duckdb {duckdb.__version__}, {threads} threads: {len(rows)} hours, {n} rows")
    print("runs: " + ", ".join(f"{t:.3f} s" for t in times))
    print(f"best_seconds={min(times):.4f}")


if __name__ == "__main__":
    main()
