#!/usr/bin/env python3
"""Reference part-load curve of a load/unload compressor on storage, by a time-domain computation.

An independent check of the closed form in src/core/partload.rs: a receiver (isothermal, free air at
the inlet pressure, V dp/dt = p_atm (Q_supply - Q_demand), the receiver equation of the US DOE
sourcebook's bleed-down test) is stepped in time with a load/unload controller (loads at the bottom of
its band, unloads at the top) and a sump blow-down after each unloading (power from b to u with time
constant tau, restarting from b at each unloading). Demand is constant; the mean power is taken over
whole load/unload cycles once the cycle repeats. Storage is given in US gal per cfm of capacity and
converted with pint.

It also logs a trace of its own (`logged_trace`): one load/unload machine with a band, blow-down and
unloaded level that are not the Rust model's defaults, on storage, under a demand that steps between
levels, stepped at 0.01 s and logged as 2 s means of power and pressure. The Rust fit
(src/core/partload/fit.rs) must give back the band and the blow-down from that log alone.

Run once by hand; the Rust test reads partload_fixture.json beside this script:

    python3 tests/reference/partload_reference.py
"""

import json
import math
import platform
from pathlib import Path

import pint

ureg = pint.UnitRegistry()

U = 0.25  # unloaded power / full power
B = 0.65  # power at the start of the blow-down / full power
TAU_S = 20.0  # blow-down time constant, s
BAND_BAR = 0.6
P_ATM_BAR = 1.01325
Q_C_M3_MIN = 10.0  # capacity, m3/min free air (the curve in shares does not depend on it)
DT_S = 0.01
CYCLES = 12


def volume_m3(gal_per_cfm):
    """System volume for the capacity, m3, and the storage in m3 per (m3/min), from US gal per cfm."""
    per = (gal_per_cfm * ureg.gallon / (ureg.foot**3 / ureg.minute)).to(ureg.meter**3 / (ureg.meter**3 / ureg.minute))
    m3_per_m3_min = per.magnitude
    return m3_per_m3_min * Q_C_M3_MIN, m3_per_m3_min


def cycle_mean_power(x, v_m3):
    """Mean power share over whole cycles at demand x Q_c, stepping the receiver in time."""
    q_c = Q_C_M3_MIN / 60.0
    q_d = x * q_c
    k = P_ATM_BAR / v_m3  # bar/s per m3/s
    p_top, p_bottom = 7.0, 7.0 - BAND_BAR
    p = p_bottom
    loaded = True
    s = 0.0  # time since unloading
    t = 0.0
    unloads = []
    energy = []  # cumulative energy (share x s) at each unloading
    e = 0.0
    while len(unloads) < CYCLES + 2:
        if loaded:
            power = 1.0
            q = q_c
        else:
            mid = s + 0.5 * DT_S
            power = U + (B - U) * 2.718281828459045 ** (-mid / TAU_S)
            q = 0.0
        e += power * DT_S
        p += k * (q - q_d) * DT_S
        t += DT_S
        s += DT_S
        if loaded and p >= p_top:
            loaded = False
            s = 0.0
            unloads.append(t)
            energy.append(e)
        elif not loaded and p <= p_bottom:
            loaded = True
    # Skip the first cycle (start-up), average the others.
    return (energy[-1] - energy[1]) / (unloads[-1] - unloads[1])


# The logged trace's own machine (invented; not the model's defaults).
TRACE = {
    "full_kw": 55.0,
    "capacity_m3_min": 10.0,
    "unloaded_fraction": 0.30,
    "blowdown_start_fraction": 0.70,
    "blowdown_tau_s": 12.0,
    "load_bar_g": 6.55,
    "unload_bar_g": 7.0,
    "volume_m3": 5.0,
    "p_atm_bar": 1.01325,
    "interval_s": 2.0,
    "dt_s": 0.01,
    # Demand share of capacity, each held for 5 minutes.
    "demand_steps": [0.30, 0.45, 0.25, 0.55, 0.35, 0.40, 0.28, 0.50],
    "step_minutes": 5.0,
}


def logged_trace():
    """Power (kW) and gauge pressure (bar) logged as interval means, stepping the receiver in time."""
    c = TRACE
    q_c = c["capacity_m3_min"] / 60.0
    k = c["p_atm_bar"] / c["volume_m3"]
    u, b, tau = c["unloaded_fraction"], c["blowdown_start_fraction"], c["blowdown_tau_s"]
    dt = c["dt_s"]
    per_bin = round(c["interval_s"] / dt)
    per_step = round(c["step_minutes"] * 60.0 / dt)
    p = 0.5 * (c["load_bar_g"] + c["unload_bar_g"])
    loaded, s = True, 1e9
    power, pressure = [], []
    e_acc, p_acc, n = 0.0, 0.0, 0
    for x in c["demand_steps"]:
        for _ in range(per_step):
            if loaded:
                share, q = 1.0, q_c
            else:
                mid = s + 0.5 * dt
                share, q = u + (b - u) * math.exp(-mid / tau), 0.0
            # The pressure over the step: its mean is the average of its two ends.
            p_next = p + k * (q - x * q_c) * dt
            e_acc += share * c["full_kw"]
            p_acc += 0.5 * (p + p_next)
            p = p_next
            s += dt
            n += 1
            if loaded and p >= c["unload_bar_g"]:
                loaded, s = False, 0.0
            elif not loaded and p <= c["load_bar_g"]:
                loaded = True
            if n == per_bin:
                power.append(round(e_acc / n, 5))
                pressure.append(round(p_acc / n, 6))
                e_acc, p_acc, n = 0.0, 0.0, 0
    return power, pressure


def main():
    out = {
        "versions": {"pint": pint.__version__, "python": platform.python_version()},
        "inputs": {
            "unloaded_fraction": U,
            "blowdown_start_fraction": B,
            "blowdown_tau_s": TAU_S,
            "band_bar": BAND_BAR,
            "p_atm_bar": P_ATM_BAR,
            "capacity_m3_min": Q_C_M3_MIN,
            "dt_s": DT_S,
        },
        "source": "time-domain receiver and load/unload controller stepped at 0.01 s (this script); "
        "storage converted with pint " + pint.__version__,
        "curves": [],
    }
    loads = [0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8]
    for g in [1.0, 3.0, 5.0, 10.0]:
        v, per = volume_m3(g)
        points = [[x, cycle_mean_power(x, v)] for x in loads]
        slopes = [[x, (cycle_mean_power(x + 0.05, v) - cycle_mean_power(x - 0.05, v)) / 0.10] for x in (0.2, 0.5, 0.8)]
        slope = slopes[1][1]
        out["curves"].append(
            {
                "us_gal_per_cfm": g,
                "volume_m3": v,
                "m3_per_m3_min": per,
                "power_share_at_load_share": points,
                "slope_at_half_load_share_per_share": slope,
                "slope_at_load_share_per_share": slopes,
            }
        )
        print(g, round(v, 4), [round(p, 4) for _, p in points], round(slope, 4))
    power, pressure = logged_trace()
    out["logged_trace"] = {
        "inputs": TRACE,
        "source": "time-domain receiver and load/unload controller with its own band and blow-down, "
        "stepped at 0.01 s and logged as 2 s means (this script)",
        "power_kw": power,
        "pressure_bar_g": pressure,
    }
    print("trace", len(power), "bins")
    path = Path(__file__).with_name("partload_fixture.json")
    path.write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
