//! The report's chart data, as the page's script reads it (JSON in a `<script>` element): every
//! series in the reader's units, the days logged, the axes' scales.

use super::*;

/// Chart data: converted to the reader's units here, so the page only draws.
pub(super) fn chart_data(b: &AuditBundle, fmt: &Fmt, sm: &Summary, logged: &[(i64, i64)]) -> Value {
    let us = fmt.is_us();
    let atm = b.audit.site.atmospheric_pressure_kpa_abs() * 1000.0;
    let flow_k = if us { 1.0 / M3_PER_FT3 } else { 1.0 }; // m³/min -> cfm
    let sp_k = if us { 100.0 * M3_PER_FT3 } else { 1.0 };
    let part_load: Vec<Value> = sm
        .system
        .part_load_curve
        .iter()
        .map(|p| serde_json::json!({"x": p.flow_m3_min * flow_k, "y": p.specific_power_kw_per_m3_min * sp_k}))
        .collect();
    let duration: Vec<Value> = sm
        .demand
        .flow_duration_curve
        .iter()
        .map(|p| serde_json::json!({"x": p.share_of_time * 100.0, "y": p.flow_m3_min * flow_k}))
        .collect();
    let heatmap: Vec<Vec<Option<f64>>> = sm
        .demand
        .weekday_hour_mean_flow_m3_min
        .iter()
        .map(|hours| hours.iter().map(|x| x.map(|v| v * flow_k)).collect())
        .collect();
    let rated_points: Vec<Value> = b
        .compressors
        .iter()
        .map(|c| serde_json::json!({"x": c.spec.rated_flow_m3_min * flow_k, "y": c.to_spec().rated_specific_power_kw_per_m3_min() * sp_k, "label": c.spec.tag}))
        .collect();
    let channels: Vec<Value> = b
        .channels
        .iter()
        .filter(|c| c.quantity != "temperature")
        .map(|c| {
            // The legend says what is measured; the file's column name (often a code such as
            // `header_bar_g`) only tells apart two channels of one quantity, quoted as the file has it.
            let name = crate::web::pages::words::channel_name(c, &b.channels);
            serde_json::json!({"id": c.id, "quantity": if c.quantity == "energy" { "power" } else { c.quantity.as_str() }, "name": name, "counter": c.quantity == "energy"})
        })
        .collect();
    let leaks: Vec<Value> = sm
        .leaks
        .estimates
        .iter()
        .map(|e| {
            serde_json::json!({
                "label": crate::web::pages::words::leak_estimate_label(e), "y": e.leak_flow_m3_min * flow_k,
                "low": e.leak_flow_m3_min_low * flow_k, "high": e.leak_flow_m3_min_high * flow_k})
        })
        .collect();
    // A withheld annual figure is drawn as no bar (null), never as a number.
    let mwh = |v: Option<f64>| v.map(|x| x / 1000.0);
    let input_kwh = sm.baseline.annual_energy_kwh;
    let h = &sm.heat;
    serde_json::json!({
        "audit_id": b.audit.id,
        "timezone": b.audit.site.timezone,
        "first_ms": b.channels.iter().map(|c| c.first_ms).min(),
        "last_ms": b.channels.iter().map(|c| c.last_ms).max(),
        // The site's local days that hold readings (the day selector), at most 1,000: the hours
        // logged, never the calendar between files logged years apart.
        "days": crate::web::pages::words::local_days(&within_readings(b, logged), &b.audit.site.timezone, 1000).into_iter().map(|(a, z, label)| serde_json::json!({"start_ms": a, "end_ms": z, "label": label})).collect::<Vec<_>>(),
        "channels": channels,
        "units": {
            "system": if us { "us" } else { "si" },
            "pressure": fmt.pressure_unit(),
            "flow": fmt.flow_unit(),
            "specific_power": fmt.specific_power_unit(),
            // display = (SI value - offset) * scale
            "pressure_offset_pa": atm,
            "pressure_scale": if us { 1.0 / PA_PER_PSI } else { 1.0e-5 },
            "flow_scale": 60.0 * flow_k,
        },
        "estimated_flow": sm.system.estimated,
        "part_load": part_load,
        "rated_points": rated_points,
        "duration": duration,
        "heatmap": heatmap,
        "leaks": leaks,
        "heat_balance": {
            "labels": ["electrical input", "heat rejected", "recoverable", "used (displaces fuel)"],
            "mwh": [mwh(input_kwh), mwh(h.annual_heat_rejected_kwh), mwh(h.annual_recoverable_kwh), mwh(h.useful_heat_kwh_per_year)],
        },
    })
}

/// The logged hours' runs cut to the first and last reading of any channel: the last hour's run
/// ends at the last reading, not at the end of its hour, so a log that stops at a midnight opens
/// no day after it (`words::local_days`).
fn within_readings(b: &AuditBundle, logged: &[(i64, i64)]) -> Vec<(i64, i64)> {
    let first = b.channels.iter().map(|c| c.first_ms).min().unwrap_or(i64::MIN);
    let last = b.channels.iter().map(|c| c.last_ms).max().unwrap_or(i64::MAX);
    logged.iter().map(|&(a, z)| (a.max(first), z.min(last))).filter(|(a, z)| a <= z).collect()
}
