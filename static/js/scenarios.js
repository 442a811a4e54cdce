// The what-if page: builds a scenario from the form, posts it, and draws the pressure traces.
"use strict";
(function () {
  const A = window.airledger;
  const data = A.pageData();
  if (!data) return;
  const form = document.getElementById("scenario-form");
  const status = document.getElementById("scenario-status");
  const tz = data.timezone || "UTC";
  const E = data.entry;
  // Stored (SI) to the reader's unit and back, through the page data's table (core::entry).
  const toReader = (kind, v) => (v - E.fields[kind].offset) / E.fields[kind].factor;
  const toStored = (kind, v) => v * E.fields[kind].factor + E.fields[kind].offset;
  const short = (v) => String(Number(v.toPrecision(9)));
  // The form filled with a stored scenario to edit (?edit=ID): the replay is then saved in its place.
  const edit = data.edit;
  if (edit) {
    const f = form.elements;
    f.name.value = edit.name;
    for (const c of edit.changes || []) {
      if (c.op === "remove") f.remove.value = c.tag;
      else if (c.op === "set_pressure") A.entry.fill(E, f.target_bar_g, c.target_bar_g);
      else if (c.op === "add_storage") A.entry.fill(E, f.add_storage_m3, c.volume_m3);
      else if (c.op === "reduce_leaks") f.reduce_leaks.value = c.fraction;
      else if (c.op === "sequence") f.order.value = (c.order || []).join(" ");
      else if (c.op === "add" && c.compressor) {
        f.add_tag.value = c.compressor.tag; f.add_control.value = c.compressor.control;
        f.add_power.value = c.compressor.rated_power_kw; A.entry.fill(E, f.add_flow, c.compressor.rated_flow_m3_min);
        A.entry.fill(E, f.add_pressure, c.compressor.rated_pressure_bar_g);
        f.add_curve.value = (c.compressor.power_curve || []).map((p) => short(toReader("free_air_flow", p[0])) + ":" + p[1]).join(" ");
        f.add_curve.dataset.shown = f.add_curve.value;
        f.add_curve.dataset.stored = JSON.stringify(c.compressor.power_curve || []);
      }
    }
    if (edit.implementation_cost !== null && edit.implementation_cost !== undefined) f.implementation_cost.value = edit.implementation_cost;
  }
  form.addEventListener("submit", async (e) => {
    e.preventDefault();
    const f = form.elements;
    const changes = [];
    // The form field each change came from, so that a refusal naming `changes[k]` is set beside it.
    const fieldOfChange = [];
    const push = (c, field) => { changes.push(c); fieldOfChange.push(field); };
    if (f.remove.value) push({ op: "remove", tag: f.remove.value }, "remove");
    if (f.target_bar_g.value) push({ op: "set_pressure", target_bar_g: A.entry.stored(E, f.target_bar_g) }, "target_bar_g");
    if (f.add_storage_m3.value) push({ op: "add_storage", volume_m3: A.entry.stored(E, f.add_storage_m3) }, "add_storage_m3");
    if (f.reduce_leaks.value) push({ op: "reduce_leaks", fraction: A.number(f.reduce_leaks.value) }, "reduce_leaks");
    if (f.order.value.trim()) push({ op: "sequence", order: f.order.value.trim().split(/[\s,]+/) }, "order");
    if (f.add_tag.value) {
      // Each point of the speed curve is two numbers, "flow:power"; one that is not is refused here,
      // in words, rather than sent as nulls the server can only name by its path.
      const typed = f.add_curve.value.trim() ? f.add_curve.value.trim().split(/\s+/) : [];
      const bad = typed.find((p) => { const parts = p.split(":"); return parts.length !== 2 || parts.some((x) => x.trim() === "" || !Number.isFinite(Number(x))); });
      const stored = f.add_curve.dataset.shown !== undefined && f.add_curve.value === f.add_curve.dataset.shown;
      if (!stored && bad !== undefined) {
        status.textContent = "Not replayed: change " + (changes.length + 1) + ", the added compressor's speed curve: each point is two numbers, flow and power, as \u201c" + f.add_curve.placeholder.split(" ")[0] + "\u201d; got \u201c" + bad + "\u201d.";
        f.add_curve.focus();
        return;
      }
      const curve = stored ? JSON.parse(f.add_curve.dataset.stored)
        : typed.map((p) => { const [q, kw] = p.split(":").map(Number); return [toStored("free_air_flow", q), kw]; });
      push({ op: "add", compressor: { tag: f.add_tag.value, kind: "lubricated_screw", control: f.add_control.value, cooling: "air",
        rated_power_kw: A.number(f.add_power.value), rated_flow_m3_min: A.entry.stored(E, f.add_flow), rated_pressure_bar_g: A.entry.stored(E, f.add_pressure), power_curve: curve } }, "add_tag");
    }
    // An empty name is the baseline's when nothing changes (the box only suggests it, so typing
    // a name never runs into a prefilled one).
    const name = f.name.value.trim() || (changes.length ? "" : "baseline");
    // An empty name goes to the server, which refuses it beside the others at once.
    status.textContent = "Replaying the logged demand\u2026";
    try {
      await A.json("/api/v1/audits/" + data.audit_id + "/scenarios" + (edit ? "/" + edit.id : ""), {
        method: edit ? "PUT" : "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(Object.assign({ name: name, changes: changes },
          f.implementation_cost.value ? { implementation_cost: A.number(f.implementation_cost.value) } : {})),
      });
      window.location.assign("/audits/" + data.audit_id + "/scenarios");
    } catch (err) {
      // Every refusal at once: each beside the field it names, all of them in the status line.
      const added = { tag: "add_tag", control: "add_control", rated_power_kw: "add_power", rated_flow_m3_min: "add_flow",
        rated_pressure_bar_g: "add_pressure", power_curve: "add_curve" };
      const fieldOf = (api) => {
        const m = /^changes\[(\d+)\](?:\.compressor\.(\w+))?/.exec(String(api || ""));
        if (!m) return String(api || "").split(".").pop();
        const own = fieldOfChange[Number(m[1])];
        return own === "add_tag" && m[2] ? added[m[2]] || "add_tag" : own;
      };
      const all = err.errors || [];
      status.textContent = all.length > 1
        ? "Not replayed: " + all.length + " fields to correct: " + all.map((x) => x.message).join("; ") + "."
        : "Not replayed: " + err.message;
      A.besideFields(form, all, fieldOf);
    }
  });
  const canvas = document.getElementById("chart-scenarios");
  if (canvas && typeof Chart !== "undefined" && data.traces.length) {
    const palette = ["#0f4c5c", "#f2a541", "#5b8e7d", "#b3261e", "#7a5195", "#2f6690"];
    const xs = data.traces.flatMap((t) => t.points.length ? [t.points[0][0], t.points[t.points.length - 1][0]] : []);
    new Chart(canvas, {
      type: "line",
      data: { datasets: data.traces.map((t, i) => ({ label: t.name, data: t.points.map((p) => ({ x: p[0], y: toReader("gauge_pressure", p[1]) })), borderColor: palette[i % palette.length], pointRadius: 0, borderWidth: 1.2 })) },
      options: { animation: false, maintainAspectRatio: false, parsing: false,
        scales: { x: { type: "linear", min: Math.min(...xs), max: Math.max(...xs), ticks: { maxTicksLimit: 6, maxRotation: 0, callback: (v) => A.tick(v, tz) }, afterBuildTicks: A.roundTicks(tz, 6), title: { display: true, text: "site time, " + tz } }, y: { title: { display: true, text: E.fields.gauge_pressure.label } } } },
    });
  }
})();
