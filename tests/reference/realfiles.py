#!/usr/bin/env python3
"""Independent reading of the real logger files in <folder>/realfiles/, for the integration test
`real_files::every_real_file_goes_in_on_the_sniffers_proposal`.

    python3 tests/reference/realfiles.py "$AIRLEDGER_REAL_DATA"

prints JSON: for each file, the data rows, the first and last timestamp (UTC, RFC 3339), and for
each physical column the readings, the arithmetic mean of its readings in SI and, for power and
energy columns, the time-weighted mean power in W.

This is the oracle, so it is written per file: each reader below knows its file's layout from
`realfiles/SOURCES.md` (encoding, preamble, delimiter, decimal mark, date order, time zone, missing
markers, units) and imports nothing from airledger. Python's standard library only (CI's Debian
has python3, not pandas). The files are other people's data: they are read from the folder at run
time and never copied into the repository, and nothing read from them is written into it.

What is computed, and why:
- `rows`: data records below the header (and its units or aggregation rows), blank lines apart.
- `first`, `last`: the earliest and latest timestamp of a data row, in UTC; per column, of a row
  with a reading in that column (an upload reports the span of the readings it stored). A local time is
  converted with the zone SOURCES.md gives (file 12: Europe/Berlin; file 14: its own offsets;
  file 13: its UTC column); where SOURCES.md names no zone the time is read as UTC, as the
  sniffer's proposal and a fresh audit do. An interval `a - b` is stamped at its start `a`
  (the reading describes the interval that begins there; a choice, said in the report).
- `mean_si`: the arithmetic mean of the column's readings (empty cells and the file's missing
  markers left out), in SI: W, J (energy counters), Pa (gauge when the logger logged gauge,
  `basis`), m³/s, K.
- `time_weighted_w` (power and energy only): the mean power over the logged time. Power: the
  trapezoid rule between consecutive readings, over steps no longer than 3 × the median step of
  that column (longer gaps are not logged time); energy counters: the increase between
  consecutive readings over such steps, a decrease (a reset) left out with its step.
- `required`: the column must be mapped by a right proposal (its quantity is what the file is
  for, or its unit is stated in the file); other listed columns are checked when mapped. A mapped
  column that is not listed is not a quantity airledger should read from that file.

Unit factors (NIST SP 811, 2008 edition, appendix B): 1 in = 0.0254 m; 1 ft = 0.3048 m;
conventional inch of mercury = 3386.389 Pa; conventional metre of water =
9806.65 Pa (ρ = 1000 kg/m³, g = 9.80665 m/s²); 1 Wh = 3600 J; °F: T/K = (t/°F + 459.67) × 5/9;
°C: T/K = t/°C + 273.15; 1 L = 1e-3 m³; 1 hPa = 100 Pa.
"""

import json
import os
import statistics
import sys
from datetime import datetime, timedelta, timezone

UTC = timezone.utc
IN_HG_PA = 3386.389
M_H2O_PA = 9806.65
FT_M = 0.3048


def c_to_k(v):
    return v + 273.15


def f_to_k(v):
    return (v + 459.67) * 5.0 / 9.0


def lines_of(path, encoding):
    with open(path, "rb") as f:
        raw = f.read()
    text = raw.decode(encoding)
    if text.startswith("\ufeff"):
        text = text[1:]
    return text.splitlines()


def number(cell, decimal=".", missing=()):
    s = cell.strip()
    if s == "" or s in missing:
        return None
    if decimal == ",":
        s = s.replace(",", ".")
    v = float(s)
    if v != v or v in (float("inf"), float("-inf")):
        return None
    return v


def utc(dt):
    """A naive datetime read as UTC, or an aware one converted."""
    if dt.tzinfo is None:
        return dt.replace(tzinfo=UTC)
    return dt.astimezone(UTC)


def berlin(naive):
    """Local civil time in Germany (CET, UTC+1; CEST, UTC+2 from the last Sunday of March 01:00 UTC
    to the last Sunday of October 01:00 UTC, EU directive 2000/84/EC) to UTC."""
    def last_sunday(year, month):
        d = datetime(year, month + 1, 1) - timedelta(days=1)
        return d - timedelta(days=(d.weekday() + 1) % 7)

    y = naive.year
    start = last_sunday(y, 3).replace(hour=2)  # 02:00 CET becomes 03:00 CEST
    end = last_sunday(y, 10).replace(hour=3)  # 03:00 CEST becomes 02:00 CET
    offset = 2 if start <= naive < end else 1
    return naive.replace(tzinfo=UTC) - timedelta(hours=offset)


class Col:
    """A physical column: how its cells become SI."""

    def __init__(self, quantity, to_si, required, basis=None):
        self.quantity = quantity
        self.to_si = to_si
        self.required = required
        self.basis = basis


def power(factor, required=True):
    return Col("power", lambda v: v * factor, required)


def summarise(rows, cols):
    """rows: [(datetime UTC, {name: value or None})]; cols: {name: Col}."""
    times = [t for t, _ in rows]
    out = {
        "rows": len(rows),
        "first": min(times).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "last": max(times).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "columns": {},
    }
    for name, col in cols.items():
        pts = [(t.timestamp(), col.to_si(vals[name])) for t, vals in rows if vals.get(name) is not None]
        pts.sort(key=lambda p: p[0])
        iso = lambda t: datetime.fromtimestamp(t, UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
        entry = {
            "quantity": col.quantity,
            "required": col.required,
            "readings": len(pts),
            "first": iso(pts[0][0]) if pts else None,
            "last": iso(pts[-1][0]) if pts else None,
            "mean_si": (sum(v for _, v in pts) / len(pts)) if pts else None,
        }
        if col.basis:
            entry["basis"] = col.basis
        if col.quantity in ("power", "energy") and len(pts) > 1:
            entry["time_weighted_w"] = time_weighted(pts, col.quantity == "energy")
        out["columns"][name] = entry
    return out


def time_weighted(pts, counter):
    steps = [b[0] - a[0] for a, b in zip(pts, pts[1:]) if b[0] > a[0]]
    limit = 3.0 * statistics.median(steps)
    integral = 0.0
    covered = 0.0
    for (t0, v0), (t1, v1) in zip(pts, pts[1:]):
        dt = t1 - t0
        if dt <= 0 or dt > limit:
            continue
        if counter:
            if v1 < v0:
                continue
            integral += v1 - v0
        else:
            integral += 0.5 * (v0 + v1) * dt
        covered += dt
    return integral / covered if covered > 0 else None


def split_rows(lines, start, delim):
    """Non-blank lines from index `start`, split by `delim`, with the blank ones counted apart."""
    out = []
    for line in lines[start:]:
        if line.strip(" \t" + delim) == "":
            continue
        out.append(line.split(delim))
    return out


def table(lines, header_ix, data_ix, delim, decimal, cols, stamp, missing=()):
    header = [h.strip() for h in lines[header_ix].split(delim)]
    ix = {name: header.index(name) for name in cols}
    rows = []
    for f in split_rows(lines, data_ix, delim):
        vals = {}
        for name, i in ix.items():
            cell = f[i] if i < len(f) else ""
            vals[name] = number(cell, decimal, missing)
        rows.append((stamp(f, header), vals))
    return rows


def f01(path):
    lines = lines_of(path, "utf-8")
    cols = {"Global_active_power": power(1e3)}
    rows = table(lines, 0, 1, ";", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0] + " " + f[1], "%d/%m/%Y %H:%M:%S")),
                 missing=("?",))
    return summarise(rows, cols)


def f02(path):
    lines = lines_of(path, "utf-8")
    cols = {
        "Pressure": Col("pressure", lambda v: v * 1e5, True, "gauge"),
        "Volume Flow RateRMS": Col("flow", lambda v: v * 1e-3 / 60.0, True),
        "Temperature": Col("temperature", c_to_k, False),
        "Thermocouple": Col("temperature", c_to_k, False),
    }
    rows = table(lines, 0, 1, ";", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S")))
    return summarise(rows, cols)


def f03(path):
    lines = lines_of(path, "latin-1")
    cols = {
        "TEMPERATURE": Col("temperature", c_to_k, True),
        # Water level in feet: a head of water, read as gauge pressure if a proposal maps it.
        "LEVEL": Col("pressure", lambda v: v * FT_M * M_H2O_PA, False, "gauge"),
    }
    rows = table(lines, 11, 12, ",", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0] + " " + f[1], "%m/%d/%Y %I:%M:%S %p")))
    return summarise(rows, cols)


def f04(path):
    lines = lines_of(path, "utf-8")
    cols = {
        "INV1 AC Power [kW]": power(1e3),
        "Module Temp [C]": Col("temperature", c_to_k, True),
        "Ambient Temp [C]": Col("temperature", c_to_k, True),
    }
    rows = table(lines, 0, 1, ",", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0], "%m/%d/%Y %H:%M")))
    return summarise(rows, cols)


def f05(path):
    lines = lines_of(path, "utf-8")
    unq = lambda s: s.strip().strip('"')
    header = [unq(h) for h in lines[1].split(",")]
    cols = {"BP_inHg_Avg": Col("pressure", lambda v: v * IN_HG_PA, True, "absolute")}
    for name in ["AirTF_Max", "AirTF_Min", "AirTF_Avg", "WC_F_Avg", "DP_F_Avg", "PanelTemp_F"]:
        cols[name] = Col("temperature", f_to_k, True)
    ix = {n: header.index(n) for n in cols}
    rows = []
    for line in lines[4:]:
        if not line.strip():
            continue
        f = [unq(c) for c in line.split(",")]
        t = utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S"))
        rows.append((t, {n: number(f[i], ".", ("NAN",)) for n, i in ix.items()}))
    return summarise(rows, cols)


def f06(path):
    lines = lines_of(path, "utf-8")
    header = lines[0].split("\t")
    rows = []
    cols = {"P(SUM)": power(1e3), "WH": Col("energy", lambda v: v * 3.6e6, True)}
    ix = {n: header.index(n) for n in cols}
    for f in split_rows(lines, 1, "\t"):
        # Each measured column is followed by its unit cell: check it says what SOURCES.md says.
        assert f[ix["P(SUM)"] + 1].strip() == "KW" and f[ix["WH"] + 1].strip() == "KWH", f
        t = utc(datetime.strptime(f[1] + " " + f[2], "%d.%m.%Y %H:%M:%S"))
        rows.append((t, {n: number(f[i], ",") for n, i in ix.items()}))
    return summarise(rows, cols)


def f07(path):
    lines = lines_of(path, "latin-1")
    names_ix = next(i for i, l in enumerate(lines) if l.startswith("\\*"))
    names = [h.strip() for h in lines[names_ix].split("\t")]
    units = [u.strip() for u in lines[names_ix + 1].split("\t")]
    m = names.index("MEASURE")
    assert units[m] == "[m3/h]", units
    cols = {"MEASURE": Col("flow", lambda v: v / 3600.0, True)}
    rows = []
    for f in split_rows(lines, names_ix + 2, "\t"):
        t = utc(datetime.strptime(f[names.index("DATE_TIME")], "%d.%m.%Y %H:%M:%S"))
        rows.append((t, {"MEASURE": number(f[m], ",")}))
    return summarise(rows, cols)


def f08(path):
    lines = lines_of(path, "latin-1")
    header_ix = next(i for i, l in enumerate(lines) if l.startswith("Datum\tUhrzeit"))
    cols = {
        "Durchfluss [l/s]": Col("flow", lambda v: v * 1e-3, True),
        "T [°C]": Col("temperature", c_to_k, True),
    }
    rows = table(lines, header_ix, header_ix + 1, "\t", ",", cols,
                 lambda f, h: utc(datetime.strptime(f[0] + " " + f[1], "%d.%m.%Y %H:%M:%S")),
                 missing=("#-1",))
    return summarise(rows, cols)


def f09(path):
    lines = lines_of(path, "latin-1")
    cols = {
        "Pressure [mWS]": Col("pressure", lambda v: v * M_H2O_PA, True, "gauge"),
        "Temperature [°C]": Col("temperature", c_to_k, False),
    }
    rows = table(lines, 2, 3, "\t", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[1] + " " + f[0], "%d.%m.%Y %H:%M:%S")))
    return summarise(rows, cols)


def f10(path):
    lines = lines_of(path, "utf-8")
    # Active power per phase and in total, W; in these rows every one is the text `1.#QNAN` (no
    # phase was connected): a right import keeps the rows and stores no reading.
    cols = {}
    for ph in ["A", "B", "C", "Total"]:
        for agg in ["avg", "min", "max"]:
            name = f"PowerP_{ph}_{agg}"
            cols[name] = power(1.0, required=(ph, agg) == ("Total", "avg"))
    rows = table(lines, 0, 1, ";", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S")),
                 missing=("1.#QNAN",))
    return summarise(rows, cols)


def f11(path):
    lines = lines_of(path, "utf-8")
    header = [h.strip() for h in lines[0].split(",")]
    cols = {h: power(1e3) for h in header if h.endswith("[kW]")}
    for name in ["temperature", "apparentTemperature", "dewPoint"]:
        cols[name] = Col("temperature", f_to_k, False)
    cols["pressure"] = Col("pressure", lambda v: v * 100.0, False, "absolute")
    rows = table(lines, 0, 1, ",", ".", cols,
                 lambda f, h: datetime.fromtimestamp(int(f[0]), UTC))
    return summarise(rows, cols)


def f12(path):
    lines = lines_of(path, "utf-8")
    unq = lambda s: s.strip().strip('"')
    header = [unq(h) for h in lines[0].split('","')]
    actual = "Actual Total Load [MW] - BZN|DE-LU"
    forecast = "Day-ahead Total Load Forecast [MW] - BZN|DE-LU"
    cols = {actual: power(1e6), forecast: power(1e6, required=False)}
    rows = []
    for line in lines[1:]:
        if not line.strip():
            continue
        f = [unq(c) for c in line.split('","')]
        start = f[0].split(" - ")[0]
        t = berlin(datetime.strptime(start, "%d.%m.%Y %H:%M"))
        rows.append((t, {n: number(f[header.index(n)], ".", ("-", "n/e")) for n in cols}))
    return summarise(rows, cols)


def f13(path):
    lines = lines_of(path, "utf-8")
    cols = {"ac_energy_inv_16425": Col("energy", lambda v: v * 3600.0, True)}
    rows = table(lines, 0, 1, ",", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S")))
    return summarise(rows, cols)


def f14(path):
    lines = lines_of(path, "utf-8")
    cols = {"ac_power__752": power(1.0)}
    rows = table(lines, 0, 1, ",", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S%z")))
    return summarise(rows, cols)


def f15(path):
    lines = lines_of(path, "latin-1")
    header_ix = next(i for i, l in enumerate(lines) if l.startswith("Date and Time;Seconds"))
    cols = {"Temperature (C)": Col("temperature", c_to_k, True)}
    rows = table(lines, header_ix, header_ix + 1, ";", ".", cols,
                 lambda f, h: utc(datetime.strptime(f[0].strip(), "%d.%m.%Y %H:%M:%S")))
    return summarise(rows, cols)


READERS = {
    "01-semicolon-date-time-kw.txt": f01,
    "02-semicolon-iso-no-units-pump-rig.csv": f02,
    "03-padded-preamble-latin1-date-time-12h.csv": f03,
    "04-units-in-brackets-month-first-no-seconds.csv": f04,
    "05-four-row-header-quoted-units-row.dat": f05,
    "06-tab-decimal-comma-unit-columns-three-phase.txt": f06,
    "07-long-preamble-names-and-units-rows-latin1.txt": f07,
    "08-latin1-preamble-decimal-comma-error-codes.txt": f08,
    "09-time-before-date-water-column-latin1.txt": f09,
    "10-semicolon-wide-three-phase-nan-text.txt": f10,
    "11-unix-seconds-units-in-brackets.csv": f11,
    "12-quoted-interval-timestamps-mw.csv": f12,
    "13-energy-counter-daily-reset-two-time-columns.csv": f13,
    "14-iso-offset-space-power-1min.csv": f14,
    "15-semicolon-report-preamble-three-row-header.csv": f15,
}


def main():
    if len(sys.argv) != 2:
        sys.exit("usage: realfiles.py <folder holding realfiles/>")
    folder = os.path.join(sys.argv[1], "realfiles")
    present = sorted(n for n in os.listdir(folder) if n != "SOURCES.md" and not n.startswith("."))
    out = {"files": {}, "unread": [n for n in present if n not in READERS]}
    for name in present:
        if name in READERS:
            out["files"][name] = READERS[name](os.path.join(folder, name))
    missing = [n for n in READERS if n not in present]
    if missing:
        sys.exit(f"files the oracle reads are not in {folder}: {missing}")
    json.dump(out, sys.stdout, indent=1, sort_keys=True)
    print()


if __name__ == "__main__":
    main()
