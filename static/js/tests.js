// The field-tests page: posts tests to the API as JSON, lists and accepts proposed decay events.
"use strict";
(function () {
  const A = window.airledger;
  const data = A.pageData();
  if (!data) return;
  const base = "/api/v1/audits/" + data.audit_id;
  const status = document.getElementById("test-status");
  const tz = data.timezone || "UTC";
  // A stored value in the reader's unit, and that unit's label (core::entry through the page data).
  const toReader = (kind, v) => { const u = data.entry.fields[kind]; return (v - u.offset) / u.factor; };
  const shown = (kind, v) => toReader(kind, v).toFixed(kind === "gauge_pressure" && data.entry.system === "us" ? 1 : 2);
  const unit = (kind) => data.entry.fields[kind].label;

  // A date-time field holds the site's wall time ("2026-03-15T02:00:00", the zone named in its
  // label); the API takes RFC 3339 with the offset the site's zone has then.
  const wallValue = (ms) => { const p = A.wall(ms, tz); return p.year + "-" + p.month + "-" + p.day + "T" + p.hour + ":" + p.minute + ":" + p.second; };
  function wallToMs(v) {
    const m = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?/.exec(v);
    if (!m) return NaN;
    const asUtc = Date.UTC(+m[1], +m[2] - 1, +m[3], +m[4], +m[5], +(m[6] || 0));
    let ms = asUtc;
    // Two steps of "shift by what the zone's clock shows there" find the instant (daylight saving too).
    for (let i = 0; i < 2; i++) {
      const p = A.wall(ms, tz);
      ms += asUtc - Date.UTC(+p.year, +p.month - 1, +p.day, +p.hour, +p.minute, +p.second);
    }
    return ms;
  }
  const fromApiTime = (s) => { const ms = Date.parse(s); return Number.isNaN(ms) ? s : wallValue(ms); };

  function formBody(form) {
    const body = { kind: form.getAttribute("data-test-kind") };
    for (const el of form.elements) {
      if (!el.name || el.value === "") continue;
      body[el.name] = el.hasAttribute("data-entry") ? A.entry.stored(data.entry, el)
        : el.inputMode === "decimal" ? A.number(el.value)
        : el.type === "datetime-local" ? A.isoLocal(wallToMs(el.value), tz) : el.value;
    }
    return body;
  }

  // A stored test to edit (?edit=ID): its form is filled with what was recorded and saves in place.
  const edit = data.edit;
  const editForm = edit ? document.querySelector("form[data-test-kind=" + edit.kind + "]") : null;
  if (editForm) {
    for (const el of editForm.elements) {
      if (!el.name || edit.input[el.name] === undefined || edit.input[el.name] === null) continue;
      if (el.hasAttribute("data-entry")) A.entry.fill(data.entry, el, edit.input[el.name]);
      else if (el.type === "datetime-local") el.value = fromApiTime(edit.input[el.name]);
      else el.value = edit.input[el.name];
    }
    editForm.setAttribute("data-test-id", edit.id);
    const b = editForm.querySelector("button[type=submit]");
    if (b) b.textContent = "Save test " + edit.id;
    editForm.scrollIntoView({ block: "center" });
  }

  // `form`: the form posted, whose fields keep what was typed and get the refusal beside its field.
  async function post(body, id, form) {
    try {
      const r = await A.json(base + "/field-tests" + (id ? "/" + id : ""), {
        method: id ? "PUT" : "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body),
      });
      status.textContent = "Recorded test " + r.id + ".";
      window.location.assign("/audits/" + data.audit_id + "/tests");
    } catch (e) {
      // Every refusal at once: each beside its field, all of them listed in the status line.
      const all = e.errors || [];
      status.textContent = all.length > 1
        ? "Not recorded: " + all.length + " fields to correct: " + all.map((x) => x.message).join("; ") + "."
        : "Not recorded: " + e.message;
      const left = form ? A.besideFields(form, all) : all;
      if (form && left.length < all.length) form.scrollIntoView({ block: "center" });
      else status.scrollIntoView({ block: "center" });
    }
  }

  for (const form of document.querySelectorAll("form[data-test-kind]")) {
    form.addEventListener("submit", (e) => { e.preventDefault(); post(formBody(form), form.getAttribute("data-test-id"), form); });
  }

  const orifice = document.getElementById("orifice-form");
  orifice.addEventListener("submit", async (e) => {
    e.preventDefault();
    const body = { audit_id: data.audit_id };
    for (const el of orifice.elements) if (el.name && el.value !== "") body[el.name] = el.hasAttribute("data-entry") ? A.entry.stored(data.entry, el) : A.number(el.value);
    const out = document.getElementById("orifice-result");
    try {
      const r = await A.json("/api/v1/calc/orifice-leak", {
        method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body),
      });
      // In the reader's units only, as every other output of the page.
      out.textContent = (data.entry.system === "us"
        ? r.leak_flow_cfm_free_air.toFixed(2) + " cfm free air"
        : r.leak_flow_m3_min.toFixed(3) + " m\u00b3/min free air") + (r.choked ? ", choked flow" : "");
    } catch (err) {
      // Every refusal at once, each beside its field, all of them in the result line.
      const all = err.errors || [];
      out.textContent = all.length > 1 ? all.map((x) => x.message).join("; ") + "." : err.message;
      A.besideFields(orifice, all);
    }
  });

  // The compression calculator: typed in the reader's units, the result in them (kW for power
  // and heat in both systems, as every page), every refusal at once beside its field.
  const compression = document.getElementById("compression-form");
  compression.addEventListener("submit", async (e) => {
    e.preventDefault();
    const body = { audit_id: data.audit_id };
    for (const el of compression.elements) if (el.name && el.value !== "") body[el.name] = el.hasAttribute("data-entry") ? A.entry.stored(data.entry, el) : A.number(el.value);
    // A typed inlet pressure is the suction's; the discharge's gauge stays on the site's atmosphere.
    if (body.inlet_pressure_kpa_abs !== undefined) body.atmospheric_pressure_kpa_abs = data.atmosphere_pa / 1000;
    const out = document.getElementById("compression-result");
    const kw = (v) => v.toLocaleString("en-US", { minimumFractionDigits: 1, maximumFractionDigits: 1 }) + " kW";
    const temp = (c) => toReader("temperature", c).toFixed(data.entry.system === "us" ? 0 : 1) + " " + unit("temperature");
    try {
      const r = await A.json("/api/v1/calc/compression", {
        method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body),
      });
      A.besideFields(compression, []);
      const head = A.el("p", { class: "status", id: "compression-powers" },
        "Isothermal power " + kw(r.isothermal_power_kw) + "; isentropic power at these stages " + kw(r.isentropic_power_kw) +
        "; shaft power " + kw(r.shaft_power_kw) + " (the isothermal power is " + (100 * r.isothermal_efficiency_of_shaft).toFixed(0) + " % of it).");
      const rows = r.stages.map((st, i) => A.el("tr", {}, A.el("td", {}, String(i + 1)),
        A.el("td", { class: "num" }, st.pressure_ratio.toFixed(3)),
        A.el("td", { class: "num" }, temp(st.discharge_temperature_c)),
        A.el("td", { class: "num" }, kw(st.shaft_power_kw)),
        A.el("td", { class: "num" }, kw(st.cooler_heat_kw))));
      const table = A.el("table", { class: "data", id: "compression-stages" },
        A.el("thead", {}, A.el("tr", {}, ...["Stage", "Pressure ratio", "Discharge temperature", "Shaft power", "Heat its cooler removes"].map((h) => A.el("th", {}, h)))),
        A.el("tbody", {}, ...rows));
      out.replaceChildren(head, A.el("div", { class: "scroll" }, table));
    } catch (err) {
      // Every refusal at once, each beside its field, all of them in the result line.
      const all = err.errors || [];
      out.replaceChildren(A.el("p", { class: "status", id: "compression-powers" },
        "Not calculated: " + (all.length > 1 ? all.map((x) => x.message).join("; ") + "." : err.message)));
      A.besideFields(compression, all);
    }
  });

  (async function events() {
    const box = document.getElementById("decay-events");
    try {
      const r = await A.json(base + "/decay-events");
      if (!r.events.length) { box.replaceChildren(A.el("p", { class: "muted" }, "No decay events found in the logs.")); return; }
      const t = A.el("table", { class: "data" }, A.el("thead", {}, A.el("tr", {},
        ...["Start", "End", "Pressure", "Duration", "Compressors", "Proposed leak flow", "Fit r\u00b2", ""].map((h) => A.el("th", {}, h)))));
      const tb = A.el("tbody");
      for (const ev of r.events) {
        const accept = A.el("button", { type: "button" }, "accept as test");
        const start = A.isoLocal(ev.start_ms, tz), end = A.isoLocal(ev.end_ms, tz);
        accept.addEventListener("click", () => post({ kind: "pressure_decay", start: start, end: end }));
        tb.append(A.el("tr", {}, A.el("td", {}, ev.start_local || A.localTime(ev.start_ms, tz)), A.el("td", {}, ev.end_local || A.localTime(ev.end_ms, tz)),
          A.el("td", {}, shown("gauge_pressure", ev.start_pressure_bar_g) + " \u2192 " + shown("gauge_pressure", ev.end_pressure_bar_g) + " " + unit("gauge_pressure")),
          A.el("td", { class: "num" }, (ev.duration_s / 60).toFixed(1) + " min"),
          A.el("td", {}, ev.all_off ? "all off" : "off or unloaded, outside production"),
          A.el("td", { class: "num" }, ev.leak_flow_at_start_pressure_m3_min === null
            ? "waits for the system volume" : shown("free_air_flow", ev.leak_flow_at_start_pressure_m3_min) + " " + unit("free_air_flow") + " free air"),
          A.el("td", { class: "num" }, ev.fit_r2.toFixed(3)), A.el("td", {}, accept)));
      }
      t.append(tb);
      box.replaceChildren(A.el("div", { class: "scroll" }, t));
    } catch (e) { box.replaceChildren(A.el("p", { class: "warn" }, e.message)); }
  })();

  // A chart of pressure, flow and power to pick a window by two clicks.
  (async function windowChart() {
    const canvas = document.getElementById("chart-window");
    if (!canvas || typeof Chart === "undefined") return;
    const st = document.getElementById("window-status");
    // Pressure, flow and power, each on its own axis and only when logged; what is not logged is
    // said in words instead of an empty axis. Every series is drawn to its own end.
    // Each machine's power in the colour the report's power chart gives it (the i-th power channel
    // the i-th of `A.palette`); pressure in greys and flow dashed, so that neither takes a machine's.
    const kinds = {
      pressure: { entry: "gauge_pressure", axis: "p", colors: ["#222222", "#6b6b6b", "#a3a3a3"], f: (v) => (v - data.atmosphere_pa) / 1e5 },
      flow: { entry: "free_air_flow", axis: "q", colors: ["#8a6d3b", "#2f6690", "#7a5195"], dash: [6, 3], f: (v) => v * 60 },
      power: { axis: "w", colors: A.palette, f: (v) => v / 1000 },
    };
    // A compressor's energy counter is the power it stands for (the series API's
    // power_from_counter, in W), drawn on the power axis after the logged power, as the report's
    // charts do.
    const kindOf = (c) => (c.quantity === "energy" && c.compressor_tag ? "power" : c.quantity);
    const all = (await A.json(base + "/channels")).channels.filter((c) => kinds[kindOf(c)]);
    const chans = all.filter((c) => c.quantity !== "energy").concat(all.filter((c) => c.quantity === "energy"));
    if (!chans.length) { st.textContent = "No pressure, flow or power logged yet."; return; }
    const axisTitle = (q) => q === "power" ? "kW" : q === "flow" ? unit("free_air_flow") + " free air" : unit("gauge_pressure");
    const datasets = [];
    const drawn = [];
    for (const c of chans) {
      const q = kindOf(c);
      const k = kinds[q];
      const s = await A.json(base + "/series?channel=" + c.id + "&points=600");
      // A counter the server does not give as power (no compressor) is not drawn.
      if (c.quantity === "energy" && !s.power_from_counter) continue;
      drawn.push(q);
      const same = chans.filter((o) => kindOf(o) === q);
      // Named in words: a machine's power by its tag (from its energy counter, if so); a second
      // pressure or flow by the name it was given ("pressure, press shop"), never a quoted column.
      const what = c.compressor_tag ? c.compressor_tag + " " + q + (c.quantity === "energy" ? ", from its energy counter" : "")
        : same.length > 1 ? q + ", " + c.label.replace(/["\u201c\u201d]/g, "") : q;
      const color = k.colors[same.indexOf(c) % k.colors.length];
      const y = (v) => (v === null ? null : k.entry ? toReader(k.entry, k.f(v)) : k.f(v));
      // A point after a silence longer than the series' gap_ms starts a new line (a null between).
      const gap = s.gap_ms || Infinity;
      const data = s.t_ms.flatMap((t, i) => {
        const p = { x: t, y: y(s.mean[i]) };
        return i > 0 && t - s.t_ms[i - 1] > gap ? [{ x: (s.t_ms[i - 1] + t) / 2, y: null }, p] : [p];
      });
      datasets.push({ label: what + ", " + axisTitle(q), data: data, yAxisID: k.axis,
        pointRadius: 0, borderWidth: 1.2, borderColor: color, backgroundColor: color, borderDash: k.dash || [] });
    }
    const present = Object.keys(kinds).filter((q) => drawn.includes(q));
    const absent = Object.keys(kinds).filter((q) => !present.includes(q));
    document.getElementById("window-absent").textContent = absent.length
      ? "Not logged in this audit: " + absent.join(" and ") + "; the chart shows " + present.join(" and ") + "." : "";
    const scales = {};
    present.forEach((q, i) => {
      scales[kinds[q].axis] = { position: i === 0 ? "left" : "right", title: { display: true, text: axisTitle(q) }, grid: { drawOnChartArea: i === 0 } };
    });
    const xs = datasets.flatMap((d) => d.data.length ? [d.data[0].x, d.data[d.data.length - 1].x] : []);
    const range = { min: Math.min(...xs), max: Math.max(...xs) };
    let picks = [];
    const chart = new Chart(canvas, {
      type: "line", data: { datasets: datasets },
      options: { animation: false, maintainAspectRatio: false, parsing: false,
        scales: { x: { type: "linear", min: range.min, max: range.max, afterBuildTicks: A.roundTicks(tz, 7),
          ticks: { maxTicksLimit: 7, maxRotation: 0, callback: (v) => A.tick(v, tz, range) }, title: { display: true, text: "site time, " + tz } },
          ...scales },
        onClick: (e) => {
          const t = Math.round(chart.scales.x.getValueForPixel(e.x));
          picks = picks.length >= 2 ? [t] : picks.concat([t]);
          if (picks.length === 2) {
            picks.sort((a, b) => a - b);
            const [a, b] = picks.map((x) => wallValue(x));
            for (const form of document.querySelectorAll("form[data-test-kind=idle_flow], form[data-test-kind=pressure_decay]")) {
              form.elements.start.value = a;
              form.elements.end.value = b;
            }
            st.textContent = "Window " + A.localTime(picks[0], tz) + " to " + A.localTime(picks[1], tz) + " set in the forms below.";
          } else {
            st.textContent = "Start " + A.localTime(t, tz) + ": click the end.";
          }
        } },
    });
  })().catch((e) => console.warn(e.message));
})();
