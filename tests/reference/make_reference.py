#!/usr/bin/env python3
"""Reference values for airledger's physics tests (src/core/air.rs, thermo.rs, leaks.rs, heat.rs).

Computes every value that the Rust unit tests compare with, using general-purpose reference libraries
(fluids, CoolProp, pint), and writes them to fixture.json beside this script: for each value its
inputs, the value, its unit, and the library function and version that produced it.

Run once by hand (not by CI); the Rust tests only read the fixture:

    python3 -m venv .venv && .venv/bin/pip install fluids==1.3.1 CoolProp==8.0.0 pint==0.25.3
    .venv/bin/python tests/reference/make_reference.py

Conventions shared with the Rust code: ideal-gas air with R = 287.0 J/(kg K) (ideal-gas air, common practice) and
k = 1.4. fluids works per mole with the universal gas constant, so a J/mol value becomes J/kg by
dividing by the molar mass that R = 287 implies: M = 8.314462618 / 287 kg/mol.
"""

import json
import math
import platform
from pathlib import Path

import CoolProp
import fluids
import numpy
import pint
import scipy
from CoolProp.CoolProp import PropsSI
from fluids.atmosphere import ATMOSPHERE_1976
from fluids.compressible import (
    isentropic_T_rise_compression,
    isentropic_work_compression,
    isothermal_work_compression,
    polytropic_exponent,
)
from fluids.safety_valve import API520_A_g
from scipy.optimize import brentq

R_UNIVERSAL = 8.314462618  # J/(mol K), the value fluids uses (fluids.constants.R)
R_AIR = 287.0  # J/(kg K), ideal-gas air (common practice; ISO 2533 uses 287.05287)
K_AIR = 1.4
M_AIR = R_UNIVERSAL / R_AIR  # kg/mol implied by R = 287
P_ATM = 101325.0

ureg = pint.UnitRegistry()
Q_ = ureg.Quantity

FLUIDS = f"fluids {fluids.__version__}"
COOLPROP = f"CoolProp {CoolProp.__version__}"
PINT = f"pint {pint.__version__}"

values = {}


def put(name, value, unit, source, inputs, note=None):
    """Record one reference value; names are unique so a test cannot read the wrong one silently."""
    assert name not in values, name
    entry = {"value": float(value), "unit": unit, "source": source, "inputs": inputs}
    if note:
        entry["note"] = note
    values[name] = entry


# ---------------------------------------------------------------- air.rs: units and the atmosphere
# Unit factors into SI, from pint's definitions (its cfm is not defined, so ft^3/min).
factors = [
    ("pa_per_bar", "bar", "Pa"),
    ("pa_per_psi", "psi", "Pa"),
    ("pa_per_kpa", "kPa", "Pa"),
    ("pa_per_mpa", "MPa", "Pa"),
    ("m3_s_per_m3_min", "m^3/min", "m^3/s"),
    ("m3_s_per_m3_h", "m^3/h", "m^3/s"),
    ("m3_s_per_l_s", "l/s", "m^3/s"),
    ("m3_s_per_cfm", "ft^3/min", "m^3/s"),
    ("w_per_kw", "kW", "W"),
    ("j_per_wh", "W*h", "J"),
    ("j_per_kwh", "kW*h", "J"),
    ("j_per_mwh", "MW*h", "J"),
    ("j_per_btu", "Btu", "J"),
]
for name, src, dst in factors:
    put(
        f"unit.{name}",
        Q_(1.0, src).to(dst).magnitude,
        f"{dst} per {src}",
        f"{PINT} Quantity(1, '{src}').to('{dst}')",
        {"from": src, "to": dst},
    )
for name, v, src in [("degf_68", 68.0, "degF"), ("degc_20", 20.0, "degC"), ("degf_minus_40", -40.0, "degF")]:
    put(
        f"unit.{name}_in_k",
        Q_(v, getattr(ureg, src)).to("K").magnitude,
        "K",
        f"{PINT} Quantity({v}, '{src}').to('K')",
        {"value": v, "unit": src},
    )

# A flow meter reading 100 scfm (ASME standard air 14.696 psia, 68 F, dry-air conversion) at a site
# at 89.875 kPa and 20 C inlet: V_FAD = V_ref (p_ref/p_in)(T_ref/T_in), done with pint quantities.
scfm_fad = (
    Q_(100.0, "ft^3/min") * (Q_(14.696, "psi") / Q_(89.875, "kPa")) * (Q_(68.0, ureg.degF).to("K") / Q_(20.0, ureg.degC).to("K"))
).to("m^3/min")
put(
    "air.scfm_100_to_free_air_m3_min",
    scfm_fad.magnitude,
    "m3/min free air",
    f"{PINT} (ideal-gas dry-air reference conversion evaluated with pint quantities)",
    {"flow_scfm": 100.0, "reference_psia": 14.696, "reference_f": 68.0, "site_kpa_abs": 89.875, "site_c": 20.0},
)
# 120 Nm3/h (DIN 1343: 101.325 kPa, 0 C) at a site at 95 kPa and 30 C.
nm3_fad = (
    Q_(120.0, "m^3/h") * (Q_(101.325, "kPa") / Q_(95.0, "kPa")) * (Q_(30.0, ureg.degC).to("K") / Q_(0.0, ureg.degC).to("K"))
).to("m^3/s")
put(
    "air.nm3_h_120_to_free_air_m3_s",
    nm3_fad.magnitude,
    "m3/s free air",
    f"{PINT} (ideal-gas dry-air reference conversion evaluated with pint quantities)",
    {"flow_nm3_h": 120.0, "site_kpa_abs": 95.0, "site_c": 30.0},
)

for z in (0.0, 250.0, 1000.0, 1500.0, 3000.0):
    put(
        f"air.atmosphere_1976_{int(z)}m_pa",
        ATMOSPHERE_1976(z).P,
        "Pa",
        f"{FLUIDS} fluids.atmosphere.ATMOSPHERE_1976(Z).P (US Standard Atmosphere 1976, geometric Z)",
        {"altitude_m": z},
        note="1976 model with geometric altitude; ASHRAE eq. 3 is a fit to it, agreement ~1e-4",
    )

# ---------------------------------------------------------------- thermo.rs: compression
T1 = 293.15
P1 = 101325.0
P2 = 790801.08  # about 100 psig at sea level: 101325 + 689476 Pa (psi to Pa, NIST SP 811)
R_RATIO = P2 / P1
base_inputs = {"t1_k": T1, "p1_pa": P1, "p2_pa": P2, "k": K_AIR}

w_iso_mol = isothermal_work_compression(P1, P2, T1)
put("thermo.isothermal_work_j_mol", w_iso_mol, "J/mol", f"{FLUIDS} isothermal_work_compression(P1, P2, T)", base_inputs)
w_is_mol = isentropic_work_compression(T1=T1, k=K_AIR, P1=P1, P2=P2, eta=1.0)
put("thermo.isentropic_work_j_mol", w_is_mol, "J/mol", f"{FLUIDS} isentropic_work_compression(T1, k, P1=, P2=, eta=1)", base_inputs)
w_is08_mol = isentropic_work_compression(T1=T1, k=K_AIR, P1=P1, P2=P2, eta=0.8)
put(
    "thermo.isentropic_work_eta_0_8_j_mol",
    w_is08_mol,
    "J/mol",
    f"{FLUIDS} isentropic_work_compression(T1, k, P1=, P2=, eta=0.8)",
    dict(base_inputs, eta=0.8),
)
put(
    "thermo.isentropic_t2_k",
    isentropic_T_rise_compression(T1, P1, P2, K_AIR, eta=1.0),
    "K",
    f"{FLUIDS} isentropic_T_rise_compression(T1, P1, P2, k, eta=1)",
    base_inputs,
    note="despite its name the function returns the discharge temperature T2, not the rise",
)
put(
    "thermo.isentropic_t2_eta_0_8_k",
    isentropic_T_rise_compression(T1, P1, P2, K_AIR, eta=0.8),
    "K",
    f"{FLUIDS} isentropic_T_rise_compression(T1, P1, P2, k, eta=0.8)",
    dict(base_inputs, eta=0.8),
)
# Polytropic work: the isentropic formula with k replaced by the polytropic exponent n; n from
# fluids for a polytropic efficiency of 0.85.
n_poly = polytropic_exponent(K_AIR, eta_p=0.85)
put("thermo.polytropic_n_eta_p_0_85", n_poly, "-", f"{FLUIDS} polytropic_exponent(k, eta_p=0.85)", {"k": K_AIR, "eta_p": 0.85})
put(
    "thermo.polytropic_work_j_mol",
    isentropic_work_compression(T1=T1, k=n_poly, P1=P1, P2=P2, eta=1.0),
    "J/mol",
    f"{FLUIDS} isentropic_work_compression(T1, k=n, P1=, P2=) with n = polytropic_exponent(1.4, eta_p=0.85)",
    dict(base_inputs, n=n_poly),
)
put("thermo.molar_mass_kg_mol", M_AIR, "kg/mol", "R_universal (fluids.constants.R) / 287", {"R_universal": R_UNIVERSAL, "R_air": R_AIR})

# Real air (CoolProp pseudo-pure 'Air'): reversible isothermal work w = (h2 - h1) - T (s2 - s1).
h1 = PropsSI("H", "T", T1, "P", P1, "Air")
s1 = PropsSI("S", "T", T1, "P", P1, "Air")
h2 = PropsSI("H", "T", T1, "P", P2, "Air")
s2 = PropsSI("S", "T", T1, "P", P2, "Air")
put(
    "thermo.coolprop_isothermal_work_j_kg",
    (h2 - h1) - T1 * (s2 - s1),
    "J/kg",
    f"{COOLPROP} PropsSI('H'/'S', 'T', T, 'P', p, 'Air'): w = dh - T ds",
    base_inputs,
)
put(
    "thermo.coolprop_cp_20c_j_kg_k",
    PropsSI("Cpmass", "T", T1, "P", P1, "Air"),
    "J/(kg K)",
    f"{COOLPROP} PropsSI('Cpmass', 'T', 293.15, 'P', 101325, 'Air')",
    {"t_k": T1, "p_pa": P1},
)

# The API.md compression example: 10 m3/min free air at 101.325 kPa, 20 C to 7 bar(g) (atmosphere
# 101.325 kPa), 2 stages, eta_s 0.8, intercooled and aftercooled to 30 C. fluids has no multi-stage
# function, so each stage is evaluated with fluids and summed; mass flow from the ideal-gas law.
ex = {
    "flow_m3_min": 10.0,
    "inlet_pressure_kpa_abs": 101.325,
    "inlet_temperature_c": 20.0,
    "discharge_pressure_bar_g": 7.0,
    "atmosphere_kpa_abs": 101.325,
    "stages": 2,
    "isentropic_efficiency": 0.8,
    "intercooled_to_c": 30.0,
}
p_in = ex["inlet_pressure_kpa_abs"] * 1000.0
p_out = ex["discharge_pressure_bar_g"] * 1e5 + ex["atmosphere_kpa_abs"] * 1000.0
t_in = ex["inlet_temperature_c"] + 273.15
t_ic = ex["intercooled_to_c"] + 273.15
v1 = ex["flow_m3_min"] / 60.0
mol_s = p_in * v1 / (R_UNIVERSAL * t_in)
mass_kg_s = mol_s * M_AIR
r_stage = (p_out / p_in) ** (1.0 / ex["stages"])
cp_mol = K_AIR * R_UNIVERSAL / (K_AIR - 1.0)
src_stage = f"{FLUIDS} isentropic_work_compression and isentropic_T_rise_compression per stage, summed"
put("compress.mass_flow_kg_s", mass_kg_s, "kg/s", "ideal gas m = p V / (R T), R = 287", ex)
put(
    "compress.isothermal_power_w",
    mol_s * isothermal_work_compression(p_in, p_out, t_in),
    "W",
    f"{FLUIDS} isothermal_work_compression x molar flow",
    ex,
)
isentropic_total = 0.0
p_stage_in = p_in
for i in range(ex["stages"]):
    t_stage_in = t_in if i == 0 else t_ic
    p_stage_out = p_stage_in * r_stage
    w_ideal = isentropic_work_compression(T1=t_stage_in, k=K_AIR, P1=p_stage_in, P2=p_stage_out, eta=1.0)
    t_dis = isentropic_T_rise_compression(t_stage_in, p_stage_in, p_stage_out, K_AIR, eta=ex["isentropic_efficiency"])
    isentropic_total += mol_s * w_ideal
    put(f"compress.stage{i + 1}.pressure_ratio", r_stage, "-", "equal ratios (p_out/p_in)^(1/N)", ex)
    put(f"compress.stage{i + 1}.discharge_temperature_k", t_dis, "K", src_stage, ex)
    put(f"compress.stage{i + 1}.cooler_heat_w", mol_s * cp_mol * (t_dis - t_ic), "W", src_stage + "; m cp (T2 - T_ic)", ex)
    put(f"compress.stage{i + 1}.shaft_power_w", mol_s * w_ideal / ex["isentropic_efficiency"], "W", src_stage, ex)
    p_stage_in = p_stage_out
put("compress.isentropic_power_w", isentropic_total, "W", src_stage, ex)
put("compress.shaft_power_w", isentropic_total / ex["isentropic_efficiency"], "W", src_stage, ex)

# ---------------------------------------------------------------- leaks.rs: orifice flow
# fluids' API 520 gas relief sizing, A = f(m, T, MW, k, P1, P2, Kd), is the ideal nozzle equation for
# critical flow and a coefficient form (F2) for subcritical flow. Inverted for the mass flow through a
# given area with Kd = 1 (the published orifice discharge table's coefficient 1.0, US DOE sourcebook).
MW_G_MOL = M_AIR * 1000.0


def api520_mass_flow(area_m2, p0, t0, p_back):
    return brentq(lambda m: API520_A_g(m, t0, 1.0, MW_G_MOL, K_AIR, p0, p_back, Kd=1.0) - area_m2, 1e-12, 100.0, xtol=1e-16, rtol=1e-14)


p_atm_14_7 = Q_(14.7, "psi").to("Pa").magnitude
for label, d_in, psig, p_back in [
    ("choked_100psig_1_16in", 1.0 / 16.0, 100.0, p_atm_14_7),
    ("choked_70psig_1_16in", 1.0 / 16.0, 70.0, p_atm_14_7),
    ("choked_100psig_1_4in", 1.0 / 4.0, 100.0, p_atm_14_7),
    ("subsonic_5psig_1_8in", 1.0 / 8.0, 5.0, p_atm_14_7),
]:
    d_m = Q_(d_in, "inch").to("m").magnitude
    area = math.pi / 4.0 * d_m * d_m
    p0 = Q_(psig, "psi").to("Pa").magnitude + p_atm_14_7
    put(
        f"orifice.api520_{label}_kg_s",
        api520_mass_flow(area, p0, 293.15, p_back),
        "kg/s",
        f"{FLUIDS} fluids.safety_valve.API520_A_g(m, T, Z=1, MW, k, P1, P2, Kd=1) inverted with scipy {scipy.__version__} brentq",
        {"diameter_in": d_in, "diameter_m": d_m, "upstream_pa_abs": p0, "back_pressure_pa_abs": p_back, "t0_k": 293.15, "mw_g_mol": MW_G_MOL, "k": K_AIR},
        note="subcritical API 520 uses a rounded constant (17.9): agreement ~0.1 %" if "subsonic" in label else None,
    )

# ---------------------------------------------------------------- leaks.rs: bleed-down, DOE form
doe = (Q_(5.0, "ft^3") * Q_(100.0 - 50.0, "psi") / (Q_(60.0, "min") * Q_(14.7, "psi")) * 1.25).to("ft^3/min")
put(
    "leaks.doe_bleed_down_cfm",
    doe.magnitude,
    "cfm free air",
    f"{PINT}: DOE sourcebook formula V (P1 - P2) / (T x 14.7) x 1.25 evaluated with pint quantities",
    {"volume_ft3": 5.0, "start_psig": 100.0, "end_psig": 50.0, "duration_min": 60.0, "atm_psia": 14.7},
)
si = (Q_(3.0, "m^3") * Q_(7.0 - 5.5, "bar") / (Q_(101.325, "kPa") * Q_(95.0, "s"))).to("m^3/min")
put(
    "leaks.si_bleed_down_mean_m3_min",
    si.magnitude,
    "m3/min free air",
    f"{PINT}: mean Q_FAD = V dp / (p_atm t) evaluated with pint quantities (API.md example)",
    {"volume_m3": 3.0, "start_bar_g": 7.0, "end_bar_g": 5.5, "duration_s": 95.0, "atm_kpa_abs": 101.325},
)

# ---------------------------------------------------------------- leaks.rs: bleed-down by the log-mean pressure
# A bleed-down of choked leaks (free-air flow c p_abs) in an isothermal volume V: V dp/dt = -p_atm c p.
# Integrated numerically (scipy solve_ivp, RK45, tight tolerances, with an event at the end pressure)
# rather than by the closed form, so the test checks the log-mean scaling against the decay itself:
# the "true" leak flow at the operating pressure is c p_op; the test's inputs are V, p1, p2 and the
# integrated duration.
from scipy.integrate import solve_ivp


def integrated_bleed_down(volume_m3, p1, p2, p_atm, c):
    def rhs(_t, y):
        return [-p_atm * c * y[0] / volume_m3]

    def reach_end(_t, y):
        return y[0] - p2

    reach_end.terminal = True
    reach_end.direction = -1
    sol = solve_ivp(rhs, (0.0, 1e7), [p1], method="RK45", rtol=1e-12, atol=1e-6, events=reach_end)
    return float(sol.t_events[0][0])


psi_pa = Q_(1.0, "psi").to("Pa").magnitude
for label, volume_m3, p_atm, p1, p2, q_start_m3_min in [
    # The DOE sourcebook's bleed-down case (5 ft3, 100 -> 50 psig, 14.7 psia); c set so 0.4 cfm leaks at 100 psig.
    ("doe_100_50_psig", Q_(5.0, "ft^3").to("m^3").magnitude, 14.7 * psi_pa, 114.7 * psi_pa, 64.7 * psi_pa,
     Q_(0.4, "ft^3/min").to("m^3/min").magnitude),
    # A wide SI test: 3 m3, 7 -> 2 bar(g) at 101.325 kPa, 1 m3/min free air at 7 bar(g).
    ("si_7_2_bar_g", 3.0, 101325.0, 801325.0, 301325.0, 1.0),
]:
    c = q_start_m3_min / 60.0 / p1  # m3/s free air per Pa absolute
    t = integrated_bleed_down(volume_m3, p1, p2, p_atm, c)
    put(
        f"leaks.log_mean_{label}_duration_s",
        t,
        "s",
        f"scipy {scipy.__version__} solve_ivp (RK45, rtol 1e-12) of V dp/dt = -p_atm c p to the end pressure",
        {"volume_m3": volume_m3, "atm_pa": p_atm, "start_pa_abs": p1, "end_pa_abs": p2, "c_m3_s_per_pa": c,
         "leak_at_start_m3_min": q_start_m3_min},
        note="the leak flow at the start (operating) pressure is c x start_pa_abs = leak_at_start_m3_min",
    )

# ---------------------------------------------------------------- leaks.rs: the adiabatic limit of a bleed-down
# A fall too fast for the walls to warm the air: the vessel gains no heat. Two independent readings of how
# much the isothermal formula, V (p1 - p2) / (R T1), then overstates the mass that left:
# 1. ideal gas (R = 287, k = 1.4): the vessel's energy balance d(m cv T) = cp T dm (the outflow carries its
#    enthalpy) with a choked leak (mass flow proportional to p / sqrt(T)), integrated with scipy solve_ivp
#    until the pressure reaches p2; no closed form used;
# 2. real air (CoolProp): the air left behind expands isentropically, so the mass left is V rho(p2, s1) against
#    V rho(p2, T1) for the isothermal reading.
def adiabatic_bleed_down_overstatement(p1, p2, t1, volume_m3=1.0):
    c_leak = 1e-6  # kg/s per Pa/sqrt(K): any value, the ratio does not depend on it

    def rhs(_t, y):
        m, t = y
        p = m * R_AIR * t / volume_m3
        dm = -c_leak * p / math.sqrt(t)
        return [dm, (K_AIR - 1.0) * t * dm / m]

    def reach_end(_t, y):
        return y[0] * R_AIR * y[1] / volume_m3 - p2

    reach_end.terminal = True
    reach_end.direction = -1
    m1 = p1 * volume_m3 / (R_AIR * t1)
    sol = solve_ivp(rhs, (0.0, 1e9), [m1, t1], method="RK45", rtol=1e-12, atol=1e-14, events=reach_end)
    m_end = float(sol.y_events[0][0][0])
    return (p1 - p2) * volume_m3 / (R_AIR * t1) / (m1 - m_end) - 1.0


for label, p_atm, p1_g, p2_g in [
    # The walk's case: 105 -> 85 psig at 14.696 psia; the API's example 7 -> 5.5 bar(g); the DOE's 100 -> 50 psig.
    ("105_85_psig", 14.696 * psi_pa, 105.0 * psi_pa, 85.0 * psi_pa),
    ("7_5_5_bar_g", P_ATM, 7.0e5, 5.5e5),
    ("100_50_psig", 14.7 * psi_pa, 100.0 * psi_pa, 50.0 * psi_pa),
]:
    p1, p2, t1 = p1_g + p_atm, p2_g + p_atm, 293.15
    inputs = {"start_pa_abs": p1, "end_pa_abs": p2, "t1_k": t1}
    put(
        f"leaks.adiabatic_overstatement_{label}",
        adiabatic_bleed_down_overstatement(p1, p2, t1),
        "1",
        f"scipy {scipy.__version__} solve_ivp (RK45, rtol 1e-12) of an adiabatic vessel, d(m cv T) = cp T dm, "
        "choked leak; ideal gas R = 287, k = 1.4",
        inputs,
    )
    d1 = PropsSI("D", "P", p1, "T", t1, "Air")
    s1 = PropsSI("S", "P", p1, "T", t1, "Air")
    put(
        f"leaks.adiabatic_overstatement_real_air_{label}",
        (d1 - PropsSI("D", "P", p2, "T", t1, "Air")) / (d1 - PropsSI("D", "P", p2, "S", s1, "Air")) - 1.0,
        "1",
        f"{COOLPROP} PropsSI('D', ...) of real air: isentropic rho(p2, s1) against isothermal rho(p2, T1)",
        inputs,
        note="real air (pseudo-pure fluid): its heat capacities differ from the ideal gas's k = 1.4 by a few per cent",
    )

# ---------------------------------------------------------------- leaks.rs: idle flow to production pressure
# Non-production flow is leaks through orifices; at another header pressure a choked orifice passes a
# mass flow proportional to its absolute upstream pressure. fluids' API 520 gas sizing (ideal nozzle,
# Kd = 1), inverted for the mass flow, at the non-production and production pressures: the ratio is
# what the summary's correction must reproduce. 2 mm, 20 C, 101.325 kPa.
for label, p_np_bar_g, p_prod_bar_g in [("5_5_to_7_bar_g", 5.5, 7.0), ("6_8_to_6_2_bar_g", 6.8, 6.2)]:
    area = math.pi / 4.0 * 0.002**2
    m_np = api520_mass_flow(area, p_np_bar_g * 1e5 + P_ATM, 293.15, P_ATM)
    m_prod = api520_mass_flow(area, p_prod_bar_g * 1e5 + P_ATM, 293.15, P_ATM)
    put(
        f"leaks.orifice_flow_ratio_{label}",
        m_prod / m_np,
        "1",
        f"{FLUIDS} fluids.safety_valve.API520_A_g inverted (scipy brentq) at both pressures: m(p_prod) / m(p_nonprod)",
        {"diameter_m": 0.002, "nonproduction_bar_g": p_np_bar_g, "production_bar_g": p_prod_bar_g, "atm_pa": P_ATM, "t0_k": 293.15},
    )

# ---------------------------------------------------------------- thermo.rs: a data sheet at another pressure
# A data-sheet machine: 55 kW package input at full load and 7.5 bar(g) (an invented data sheet), at
# a sea-level site (101325 Pa, 20 C inlet). Its full-load power at 6.5, 7.5 and 8.5 bar(g), corrected
# by the ratio of isentropic work at the two pressures, computed independently twice: ideal-gas air
# with fluids, and real air (CoolProp, isentropic enthalpy rise h(p2, s1) - h(p1, T1)).
DS_KW = 55.0
DS_RATED_BAR_G = 7.5
DS_T1 = 293.15
DS_P1 = 101325.0


def ds_p_abs(bar_g):
    return DS_P1 + bar_g * 1e5


def fluids_w(bar_g, stages=1):
    """Isentropic work, J/mol, of equal-ratio stages each starting at T1 (fluids, k = 1.4)."""
    r = ds_p_abs(bar_g) / DS_P1
    r_stage = r ** (1.0 / stages)
    return stages * isentropic_work_compression(T1=DS_T1, k=K_AIR, P1=DS_P1, P2=DS_P1 * r_stage, eta=1.0)


def coolprop_w(bar_g):
    """Real-air isentropic work, J/kg: h(p2, s1) - h(p1, T1)."""
    h1 = PropsSI("H", "T", DS_T1, "P", DS_P1, "Air")
    s1 = PropsSI("S", "T", DS_T1, "P", DS_P1, "Air")
    return PropsSI("H", "P", ds_p_abs(bar_g), "S", s1, "Air") - h1


ds_inputs = {"rated_kw": DS_KW, "rated_bar_g": DS_RATED_BAR_G, "t1_k": DS_T1, "p1_pa": DS_P1, "k": K_AIR}
for bar_g in (6.5, 7.5, 8.5):
    tag = f"{int(round(bar_g * 10))}"
    put(
        f"datasheet.power_at_{tag}_bar_g_kw",
        DS_KW * fluids_w(bar_g) / fluids_w(DS_RATED_BAR_G),
        "kW",
        f"{FLUIDS} rated kW x isentropic_work_compression(T1, k=1.4, P1=, P2=p, eta=1) / the same at the rated pressure",
        dict(ds_inputs, at_bar_g=bar_g),
    )
    put(
        f"datasheet.coolprop_power_at_{tag}_bar_g_kw",
        DS_KW * coolprop_w(bar_g) / coolprop_w(DS_RATED_BAR_G),
        "kW",
        f"{COOLPROP} real air: rated kW x (h(p, s1) - h1) / the same at the rated pressure",
        dict(ds_inputs, at_bar_g=bar_g),
    )
put(
    "datasheet.two_stage_power_at_85_bar_g_kw",
    DS_KW * fluids_w(8.5, 2) / fluids_w(DS_RATED_BAR_G, 2),
    "kW",
    f"{FLUIDS} two equal-ratio stages intercooled to T1: 2 x isentropic_work_compression per stage",
    dict(ds_inputs, at_bar_g=8.5, stages=2),
)

# ---------------------------------------------------------------- heat.rs
put(
    "heat.doe_rule_50000_btu_h_in_w",
    Q_(50000.0, "Btu/hour").to("W").magnitude,
    "W",
    f"{PINT} Quantity(50000, 'Btu/hour').to('W') (pint's Btu is the International Table Btu)",
    {"btu_per_h": 50000.0},
)

# ---------------------------------------------------------------- ingest/sniff/physics.rs: humidity
# Relative humidity of moist air from dry-bulb temperature and dew point at one atmosphere, by
# ------------------------------------------------- recommend: the lower-pressure measure, worked example
# A plant whose machines deliver (run loaded) for 200 000 kWh of its 300 000 kWh a year (loaded share
# 2/3); header 7.0 -> 6.5 bar(g), inlet 101.325 kPa and 20 C, single-stage machines. The saving on the
# loaded energy by the ratio of isentropic work (fluids), and by the US DOE sourcebook's rule of 1 %
# of input per 2 psi, with the step in psi from pint.
PR_LOADED_KWH = 200000.0
pr_inputs = {"loaded_kwh": PR_LOADED_KWH, "from_bar_g": 7.0, "to_bar_g": 6.5, "t1_k": DS_T1, "p1_pa": DS_P1, "k": K_AIR}
put(
    "pressure_measure.isentropic_saving_kwh",
    PR_LOADED_KWH * (1.0 - fluids_w(6.5) / fluids_w(7.0)),
    "kWh",
    f"{FLUIDS} loaded kWh x (1 - isentropic_work_compression(P2=6.5 bar(g)) / the same at 7.0 bar(g))",
    pr_inputs,
)
step_psi = Q_(0.5, "bar").to("psi").magnitude
put(
    "pressure_measure.doe_rule_saving_kwh",
    PR_LOADED_KWH * 0.01 * step_psi / 2.0,
    "kWh",
    f"US DOE sourcebook rule (1 % per 2 psi), 0.5 bar in psi by {PINT}",
    pr_inputs,
)

# -------------------------------------------- filter excess drop, priced like a set-point change
# A filter rated 10 m3/min with a clean drop of 0.10 bar (data sheet, at rated flow) reads 0.45 bar at
# a mean flow of 8 m3/min. Drop ~ flow^2 (common practice): clean at 8 m3/min = 0.10 x (8/10)^2 =
# 0.064 bar, so the excess is 0.386 bar. The header stays at 7.0 bar(g); the discharge falls from
# 7.386 to 7.0 bar(g) with a new element. Priced on 200 000 kWh/yr of loaded energy (one stage) by
# the US DOE sourcebook's 1 % per 2 psi (bar to psi by pint) and by the ratio of isentropic work (fluids).
FILTER_EXCESS_BAR = 0.45 - 0.10 * (8.0 / 10.0) ** 2
filter_inputs = {"loaded_kwh": PR_LOADED_KWH, "header_bar_g": 7.0, "excess_bar": FILTER_EXCESS_BAR,
                 "rated_flow_m3_min": 10.0, "clean_drop_bar": 0.10, "measured_drop_bar": 0.45,
                 "mean_flow_m3_min": 8.0, "t1_k": DS_T1, "p1_pa": DS_P1, "k": K_AIR}
put(
    "filter.excess_doe_rule_kwh",
    PR_LOADED_KWH * 0.01 * Q_(FILTER_EXCESS_BAR, "bar").to("psi").magnitude / 2.0,
    "kWh",
    f"US DOE sourcebook rule (1 % per 2 psi) on the excess drop, bar to psi by {PINT}",
    filter_inputs,
)
put(
    "filter.excess_isentropic_kwh",
    PR_LOADED_KWH * (1.0 - fluids_w(7.0) / fluids_w(7.0 + FILTER_EXCESS_BAR)),
    "kWh",
    f"{FLUIDS} loaded kWh x (1 - isentropic_work_compression(P2=7.0 bar(g)) / the same at 7.386 bar(g))",
    filter_inputs,
)

# -------------------------------------------- cost of air: US DOE tip sheet, kW/100 cfm / 6 x price
# Cost of 1000 ft3 = (kW per 100 cfm) / 6 x price per kWh (US DOE compressed-air tip sheet #1,
# "Determine the Cost of Compressed Air for Your Plant"); a plant at 6.25 kW/(m3/min) (50 kW, 8 m3/min).
sp_kw_per_m3_min = 50.0 / 8.0
kw_per_100cfm = sp_kw_per_m3_min * Q_(100.0, "ft^3/min").to("m^3/min").magnitude
ft3_per_1000_m3 = Q_(1000.0, "m^3").to("ft^3").magnitude
for price in (0.10, 0.20):
    per_kft3 = kw_per_100cfm / 6.0 * price
    tag = f"{int(round(price * 100)):02d}"
    put(
        f"cost_of_air.per_1000_ft3_at_{tag}",
        per_kft3,
        "currency/1000 ft3",
        f"US DOE tip sheet formula kW/100 cfm / 6 x price; units by {PINT}",
        {"kw_per_m3_min": sp_kw_per_m3_min, "price_per_kwh": price},
    )
    put(
        f"cost_of_air.per_1000_m3_at_{tag}",
        per_kft3 * ft3_per_1000_m3 / 1000.0,
        "currency/1000 m3",
        f"the same per 1000 m3 ({PINT}: 1000 m3 = {ft3_per_1000_m3:.3f} ft3)",
        {"kw_per_m3_min": sp_kw_per_m3_min, "price_per_kwh": price},
    )

# CoolProp's humid-air model (Hyland-Wexler saturation with enhancement factor): the sniffer's
# Magnus formula must come within 0.01 of it. Dew points at or above 0 °C only: below it CoolProp's
# saturation is over ice (a frost point), while weather loggers report humidity over water.
from CoolProp.HumidAirProp import HAPropsSI

for t_c, dew_c in [(20.0, 10.0), (36.0, 24.0), (8.0, 2.0), (45.0, 20.0)]:
    put(
        f"humidity.rh_t{t_c:g}_dew{dew_c:g}".replace("-", "m"),
        HAPropsSI("R", "T", t_c + 273.15, "D", dew_c + 273.15, "P", P_ATM),
        "1",
        f"{COOLPROP} HAPropsSI('R', 'T', T, 'D', Tdew, 'P', 101325)",
        {"t_c": t_c, "dew_c": dew_c, "p_pa": P_ATM},
    )

# ---------------------------------------------------------------- treatment.rs: drains
# A timer drain: a 3 mm sharp-edged orifice (Cd 0.61) open 5 s every 300 s at 7 bar(g), sea level,
# 20 °C: the orifice's mass flow (fluids API 520, Kd 1, x Cd) as free air x the open share.
d_drain = 0.003
p_drain = 7.0e5 + P_ATM
m_drain = 0.61 * api520_mass_flow(math.pi / 4.0 * d_drain**2, p_drain, 293.15, P_ATM)
put(
    "treatment.timer_drain_3mm_7barg_5s_300s_m3_min",
    m_drain * R_AIR * 293.15 / P_ATM * 60.0 * 5.0 / 300.0,
    "m3/min",
    f"{FLUIDS} API520_A_g inverted (Kd 1) x Cd 0.61, free air m R T / p_atm, x 5 s / 300 s",
    {"orifice_mm": 3.0, "cd": 0.61, "pressure_bar_g": 7.0, "p_atm_pa": P_ATM, "t_k": 293.15, "open_s": 5.0, "interval_s": 300.0},
)

fixture = {
    "generated_by": "tests/reference/make_reference.py",
    "versions": {
        "python": platform.python_version(),
        "fluids": fluids.__version__,
        "CoolProp": CoolProp.__version__,
        "pint": pint.__version__,
        "numpy": numpy.__version__,
        "scipy": scipy.__version__,
    },
    "conventions": {"R_air_j_kg_k": R_AIR, "k_air": K_AIR, "R_universal_j_mol_k": R_UNIVERSAL, "M_air_kg_mol": M_AIR},
    "values": values,
}
out = Path(__file__).with_name("fixture.json")
out.write_text(json.dumps(fixture, indent=1, sort_keys=True) + "\n")
print(f"wrote {len(values)} values to {out.name}")
