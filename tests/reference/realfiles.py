#!/usr/bin/env python3
"""Independent reading of the real logger files in <folder>/realfiles/, for the integration test
`real_files::every_real_file_goes_in_on_the_sniffers_proposal`.

    python3 tests/reference/realfiles.py "$AIRLEDGER_REAL_DATA"

prints JSON: for each file, the data rows, the first and last timestamp (UTC, RFC 3339), and for
each physical column the readings, the arithmetic mean of its readings in SI and, for power and
energy columns, the time-weighted mean power in W.

This is the oracle, so it is written per file: each reader below knows its file's layout, in
general words, from `realfiles/SOURCES.md` (encoding, preamble, delimiter, decimal mark, date order,
time zone, missing markers, units) and imports nothing from airledger. It holds none of the files'
contents: the column names and the header's place are read from each file at run time, by rules
on the header (a unit in brackets, a units row, a word such as "pressure"), and the files are
found by the number that starts their name. Python's standard library only (CI's Debian
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


def pick(header, test, make):
    """The columns of `header` that pass `test` (a rule on the name, in general words), each made by
    `make(name)`: the names come from the file as it is read, never from this script."""
    return {h: make(h) for h in header if h and test(h)}


def first_line(lines, test):
    return next(i for i, l in enumerate(lines) if test(l))


def table(lines, header_ix, data_ix, delim, decimal, choose, stamp, missing=()):
    """Rows below `header_ix`; `choose(header)` gives the columns to read ({name: Col})."""
    header = [h.strip() for h in lines[header_ix].split(delim)]
    cols = choose(header)
    ix = {name: header.index(name) for name in cols}
    rows = []
    for f in split_rows(lines, data_ix, delim):
        vals = {}
        for name, i in ix.items():
            cell = f[i] if i < len(f) else ""
            vals[name] = number(cell, decimal, missing)
        rows.append((stamp(f, header), vals))
    return rows, cols


def read(rows_cols):
    rows, cols = rows_cols
    return summarise(rows, cols)


# Each reader below describes its file's layout in general words, as SOURCES.md does: where the
# header is, the delimiter and decimal mark, the date order, the markers, and which columns carry
# which quantity in which unit, told by a rule on the header read from the file itself.


def f01(path):
    # Day-first date and time columns; the active-power column (not the reactive one) in kW; `?`
    # marks a missing minute.
    lines = lines_of(path, "utf-8")
    active = lambda h: "active_power" in h.lower() and "reactive" not in h.lower()
    return read(table(lines, 0, 1, ";", ".", lambda hd: pick(hd, active, lambda _: power(1e3)),
                      lambda f, h: utc(datetime.strptime(f[0] + " " + f[1], "%d/%m/%Y %H:%M:%S")),
                      missing=("?",)))


def f02(path):
    # A pump rig without units in the header: pressure in bar (gauge), flow in litres per minute,
    # two temperatures in °C (the source's README).
    lines = lines_of(path, "utf-8")

    def choose(hd):
        cols = pick(hd, lambda h: h.lower() == "pressure", lambda _: Col("pressure", lambda v: v * 1e5, True, "gauge"))
        cols.update(pick(hd, lambda h: "flow" in h.lower(), lambda _: Col("flow", lambda v: v * 1e-3 / 60.0, True)))
        cols.update(pick(hd, lambda h: h.lower() in ("temperature", "thermocouple"), lambda _: Col("temperature", c_to_k, False)))
        return cols

    return read(table(lines, 0, 1, ";", ".", choose,
                      lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S"))))


def f03(path):
    # A preamble padded with commas, then date and time columns (month first, 12-hour clock); the
    # temperature in °C and a water level in feet (a head of water, gauge, if a proposal maps it).
    lines = lines_of(path, "latin-1")
    h = first_line(lines, lambda l: l.lower().startswith("date,time"))

    def choose(hd):
        cols = pick(hd, lambda x: x.upper() == "TEMPERATURE", lambda _: Col("temperature", c_to_k, True))
        cols.update(pick(hd, lambda x: x.upper() == "LEVEL", lambda _: Col("pressure", lambda v: v * FT_M * M_H2O_PA, False, "gauge")))
        return cols

    return read(table(lines, h, h + 1, ",", ".", choose,
                      lambda f, _: utc(datetime.strptime(f[0] + " " + f[1], "%m/%d/%Y %I:%M:%S %p"))))


def f04(path):
    # Units in brackets; month-first dates without seconds; the inverter's AC power in kW and the
    # temperatures in °C.
    lines = lines_of(path, "utf-8")

    def choose(hd):
        cols = pick(hd, lambda h: "power" in h.lower() and h.endswith("[kW]"), lambda _: power(1e3))
        cols.update(pick(hd, lambda h: "temp" in h.lower() and h.endswith("[C]"), lambda _: Col("temperature", c_to_k, True)))
        return cols

    return read(table(lines, 0, 1, ",", ".", choose,
                      lambda f, h: utc(datetime.strptime(f[0], "%m/%d/%Y %H:%M"))))


def f05(path):
    # A four-row header (title, names, units, aggregation), every cell quoted: the column whose
    # unit is inches of mercury (absolute) and every column in °F.
    lines = lines_of(path, "utf-8")
    unq = lambda s: s.strip().strip('"')
    header = [unq(h) for h in lines[1].split(",")]
    units = [unq(u) for u in lines[2].split(",")]
    cols = {}
    for n, u in zip(header, units):
        if u == "inHg":
            cols[n] = Col("pressure", lambda v: v * IN_HG_PA, True, "absolute")
        elif u == "°F":
            cols[n] = Col("temperature", f_to_k, True)
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
    # Tab-separated, decimal comma; each measured column followed by a cell holding its unit: the
    # columns whose unit cell says kW (power) and kWh (an energy counter).
    lines = lines_of(path, "utf-8")
    header = lines[0].split("\t")
    data = split_rows(lines, 1, "\t")
    unit_of = {i: data[0][i + 1].strip() for i in range(len(header) - 1) if header[i + 1].strip() == "Unit"}
    cols = {}
    for i, u in unit_of.items():
        if u == "KW":
            cols[header[i]] = power(1e3)
        elif u == "KWH":
            cols[header[i]] = Col("energy", lambda v: v * 3.6e6, True)
    ix = {n: header.index(n) for n in cols}
    rows = []
    for f in data:
        for n, i in ix.items():
            assert f[i + 1].strip() == unit_of[i], f
        t = utc(datetime.strptime(f[1] + " " + f[2], "%d.%m.%Y %H:%M:%S"))
        rows.append((t, {n: number(f[i], ",") for n, i in ix.items()}))
    return summarise(rows, cols)


def f07(path):
    # A long preamble, then a names row and a units row (both marked in their first cell); the
    # column whose unit is m³/h; tab-separated, decimal comma, day-first dates.
    lines = lines_of(path, "latin-1")
    names_ix = first_line(lines, lambda l: l.startswith("\\*"))
    names = [h.strip() for h in lines[names_ix].split("\t")]
    units = [u.strip() for u in lines[names_ix + 1].split("\t")]
    m = units.index("[m3/h]")
    when = next(i for i, n in enumerate(names) if "DATE" in n.upper())
    cols = {names[m]: Col("flow", lambda v: v / 3600.0, True)}
    rows = []
    for f in split_rows(lines, names_ix + 2, "\t"):
        t = utc(datetime.strptime(f[when], "%d.%m.%Y %H:%M:%S"))
        rows.append((t, {names[m]: number(f[m], ",")}))
    return summarise(rows, cols)


def f08(path):
    # A preamble with blank lines, then a header with units in brackets (litres per second, °C),
    # tab-separated, decimal comma; `#-1` where the meter had no value.
    lines = lines_of(path, "latin-1")
    h = first_line(lines, lambda l: l.count("\t") >= 4 and "[l/s]" in l)

    def choose(hd):
        cols = pick(hd, lambda x: x.endswith("[l/s]"), lambda _: Col("flow", lambda v: v * 1e-3, True))
        cols.update(pick(hd, lambda x: x.startswith("T ") and x.endswith("[°C]"), lambda _: Col("temperature", c_to_k, True)))
        return cols

    return read(table(lines, h, h + 1, "\t", ",", choose,
                      lambda f, _: utc(datetime.strptime(f[0] + " " + f[1], "%d.%m.%Y %H:%M:%S")),
                      missing=("#-1",)))


def f09(path):
    # Time before date; pressure in metres of water column (relative) and a temperature in °C.
    lines = lines_of(path, "latin-1")

    def choose(hd):
        cols = pick(hd, lambda x: x.endswith("[mWS]"), lambda _: Col("pressure", lambda v: v * M_H2O_PA, True, "gauge"))
        cols.update(pick(hd, lambda x: x.startswith("Temperature") and x.endswith("[°C]"), lambda _: Col("temperature", c_to_k, False)))
        return cols

    return read(table(lines, 2, 3, "\t", ".", choose,
                      lambda f, h: utc(datetime.strptime(f[1] + " " + f[0], "%d.%m.%Y %H:%M:%S"))))


def f10(path):
    # Active power per phase and in total, W, as average, minimum and maximum; in these rows every
    # one is the text `1.#QNAN` (no phase was connected): a right import keeps the rows and stores
    # no reading. The total's average is the one a proposal must map.
    lines = lines_of(path, "utf-8")

    def choose(hd):
        cols = {}
        for h in hd:
            parts = h.split("_")
            # "power" and P, the symbol of active power (IEC 60050-131; S is apparent, Q reactive).
            if len(parts) == 3 and parts[0].lower() == "power" + "p" and parts[2].lower() in ("avg", "min", "max"):
                cols[h] = power(1.0, required=(parts[1].lower(), parts[2].lower()) == ("total", "avg"))
        return cols

    return read(table(lines, 0, 1, ";", ".", choose,
                      lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S")),
                      missing=("1.#QNAN",)))


def f11(path):
    # Unix seconds; every `[kW]` column; the weather's temperatures in °F and pressure in hPa.
    lines = lines_of(path, "utf-8")

    def choose(hd):
        cols = pick(hd, lambda h: h.endswith("[kW]"), lambda _: power(1e3))
        cols.update(pick(hd, lambda h: "temperature" in h.lower() or h.lower() == "dewpoint", lambda _: Col("temperature", f_to_k, False)))
        cols.update(pick(hd, lambda h: h == "pressure", lambda _: Col("pressure", lambda v: v * 100.0, False, "absolute")))
        return cols

    return read(table(lines, 0, 1, ",", ".", choose,
                      lambda f, h: datetime.fromtimestamp(int(f[0]), UTC)))


def f12(path):
    # Quoted interval timestamps in local time (Europe/Berlin), stamped at the interval's start;
    # two load columns in MW, the actual one required; `-` and `n/e` where there is no value.
    lines = lines_of(path, "utf-8")
    unq = lambda s: s.strip().strip('"')
    header = [unq(h) for h in lines[0].split('","')]
    cols = pick(header, lambda h: "[MW]" in h, lambda h: power(1e6, required="actual" in h.lower()))
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
    # A UTC time column, then the energy counter (Wh, reset each morning), then a local time.
    lines = lines_of(path, "utf-8")
    return read(table(lines, 0, 1, ",", ".", lambda hd: {hd[1]: Col("energy", lambda v: v * 3600.0, True)},
                      lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S"))))


def f14(path):
    # ISO 8601 times with a space and an offset, then AC power in W.
    lines = lines_of(path, "utf-8")
    return read(table(lines, 0, 1, ",", ".", lambda hd: {hd[1]: power(1.0)},
                      lambda f, h: utc(datetime.strptime(f[0], "%Y-%m-%d %H:%M:%S%z"))))


def f15(path):
    # A report preamble, then a three-row header (`;`, day-first); the temperature in °C.
    lines = lines_of(path, "latin-1")
    # The header is the line that starts with the date-and-time column and names the elapsed
    # seconds beside it (a report section above it also starts with the date).
    h = first_line(lines, lambda l: "date" in l.split(";")[0].lower() and "time" in l.split(";")[0].lower()
                   and "seconds" in l.lower())
    return read(table(lines, h, h + 1, ";", ".",
                      lambda hd: pick(hd, lambda x: x.startswith("Temperature") and "(C)" in x, lambda _: Col("temperature", c_to_k, True)),
                      lambda f, _: utc(datetime.strptime(f[0].strip(), "%d.%m.%Y %H:%M:%S"))))


# The readers by the number that starts each file's name in the folder (`01-...` to `15-...`).
READERS = {f"{i:02d}": fn for i, fn in enumerate(
    [f01, f02, f03, f04, f05, f06, f07, f08, f09, f10, f11, f12, f13, f14, f15], start=1)}


def main():
    if len(sys.argv) != 2:
        sys.exit("usage: realfiles.py <folder holding realfiles/>")
    folder = os.path.join(sys.argv[1], "realfiles")
    present = sorted(n for n in os.listdir(folder) if n != "SOURCES.md" and not n.startswith("."))
    number_of = {n: n[:2] for n in present}
    out = {"files": {}, "unread": [n for n in present if number_of[n] not in READERS]}
    for name in present:
        if number_of[name] in READERS:
            out["files"][name] = READERS[number_of[name]](os.path.join(folder, name))
    missing = [k for k in READERS if k not in number_of.values()]
    if missing:
        sys.exit(f"files the oracle reads are not in {folder}: {missing}")
    json.dump(out, sys.stdout, indent=1, sort_keys=True)
    print()


if __name__ == "__main__":
    main()
