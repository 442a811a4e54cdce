// The manager's report: draws every chart from the JSON in #chart-data (already in the reader's
// units) and from the downsampled series API; edits implementation costs in place.
"use strict";
(function () {
  const A = window.airledger;
  const d = A.pageData("chart-data");
  if (!d || typeof Chart === "undefined") return;
  Chart.defaults.animation = false;
  Chart.defaults.maintainAspectRatio = false;
  Chart.defaults.font.family = getComputedStyle(document.body).fontFamily;
  const palette = A.palette;
  const charts = {};
  // Site time, 24-hour, day before month as the rest of the pages write it ("Tue 10 Mar 06:00");
  // with the year when the axis crosses one ("17 Dec 2006"), without the hour when it spans weeks.
  const fmtTime = (ms, range) => A.tick(ms, d.timezone, range);

  function make(id, config) {
    const el = document.getElementById(id);
    if (!el) return null;
    if (charts[id]) charts[id].destroy();
    charts[id] = new Chart(el, config);
    return charts[id];
  }

  const timeAxis = { type: "linear", ticks: { maxTicksLimit: window.innerWidth < 640 ? 4 : 7, maxRotation: 0 } };
  const timeTicks = (range) => Object.assign({}, timeAxis.ticks, { callback: (v) => fmtTime(v, range) });
  const u = d.units;
  const convert = {
    power: (v) => v / 1000,
    pressure: (v) => (v - u.pressure_offset_pa) * u.pressure_scale,
    flow: (v) => v * u.flow_scale,
  };

  // What a chart with nothing to draw says instead (the axis then spans the period asked for).
  const nothing = { power: "No compressor power was logged", pressure: "No pressure was logged", flow: "No flow was logged" };

  async function loadSeries(from, to, day) {
    const q = (from ? "&from=" + new Date(from).toISOString() + "&to=" + new Date(to).toISOString() : "") + "&points=500";
    const groups = { power: [], pressure: [], flow: [] };
    // An energy counter's series is the power it stands for (the server's), drawn after the
    // logged power.
    const ordered = d.channels.filter((c) => !c.counter).concat(d.channels.filter((c) => c.counter));
    for (const c of ordered) {
      if (!groups[c.quantity]) continue;
      const s = await A.json("/api/v1/audits/" + d.audit_id + "/series?channel=" + c.id + q);
      groups[c.quantity].push({ c: c, s: s });
    }
    for (const [quantity, list] of Object.entries(groups)) {
      const f = convert[quantity];
      const datasets = [];
      list.forEach((item, i) => {
        const color = palette[i % palette.length];
        // A point after a silence longer than the series' gap_ms starts a new line: a null between
        // them breaks it (Chart.js leaves gaps open, spanGaps false), never a line across the gap.
        const gap = item.s.gap_ms || Infinity;
        const pts = (arr) => item.s.t_ms.flatMap((t, k) => {
          const p = { x: t, y: f(arr[k]) };
          const prev = item.s.t_ms[k - 1];
          return k > 0 && t - prev > gap ? [{ x: (prev + t) / 2, y: null }, p] : [p];
        });
        datasets.push({ label: item.c.name + (item.c.counter ? ", from its energy counter" : "") + " (mean)", data: pts(item.s.mean), borderColor: color, backgroundColor: color, pointRadius: 0, borderWidth: 1.5 });
        if (quantity !== "power") {
          datasets.push({ label: item.c.name + " (min)", data: pts(item.s.min), borderColor: "transparent", pointRadius: 0, fill: false });
          datasets.push({ label: item.c.name + " (max)", data: pts(item.s.max), borderColor: "transparent", backgroundColor: color + "33", pointRadius: 0, fill: "-1" });
        }
      });
      if (!datasets.length) datasets.push({ label: "not logged", data: [] });
      const xs = list.flatMap((it) => [it.s.t_ms[0], it.s.t_ms[it.s.t_ms.length - 1]]).filter((x) => x !== undefined);
      // Nothing logged in the period: the axis spans the period asked for (never the epoch of an
      // empty scale), and the words under the chart say what is missing.
      // A single instant (one reading, or readings at one time) draws no line: it is said so too.
      const drawn = xs.length > 0 && Math.max(...xs) > Math.min(...xs);
      const range = drawn ? { min: Math.min(...xs), max: Math.max(...xs) }
        : { min: from ? from : d.first_ms, max: from ? to : d.last_ms };
      const note = document.getElementById("chart-" + quantity + "-empty");
      if (note) {
        note.hidden = drawn;
        note.textContent = drawn ? "" : nothing[quantity] + (day ? " on " + day : "") +
          (xs.length ? " apart from one instant, which draws no line" : "") + ".";
      }
      const x = Object.assign({}, timeAxis, range, { ticks: timeTicks(range), afterBuildTicks: A.roundTicks(d.timezone, timeAxis.ticks.maxTicksLimit) });
      make("chart-" + quantity, {
        type: "line",
        data: { datasets: datasets },
        options: { parsing: false, spanGaps: false, scales: { x: x }, plugins: { legend: { labels: { filter: (it) => !/\((min|max)\)$/.test(it.text) } } } },
      });
    }
  }

  // Period selector: the whole log or one local day of it.
  const sel = document.getElementById("period-select");
  // The days are the site's (cut at its local midnights, from the server) and only those logged.
  if (sel && d.days && d.days.length) {
    for (const day of d.days) sel.append(A.el("option", { value: String(day.start_ms), "data-end": String(day.end_ms) }, day.label));
    sel.addEventListener("change", () => {
      const o = sel.selectedOptions[0];
      const t = Number(sel.value);
      loadSeries(sel.value ? t : null, sel.value ? Number(o.getAttribute("data-end")) : null, sel.value ? o.textContent : null).catch(showError);
    });
  }
  function showError(e) { console.warn("chart data: " + e.message); }
  loadSeries().catch(showError);

  make("chart-partload", {
    type: "scatter",
    data: { datasets: [
      { label: "logged" + (d.estimated_flow ? " (flow estimated)" : ""), data: d.part_load, borderColor: palette[0], backgroundColor: palette[0], showLine: true },
      { label: "data sheet at full load", data: d.rated_points, borderColor: palette[1], backgroundColor: palette[1], pointStyle: "rectRot", pointRadius: 6 },
    ] },
    options: { scales: { x: { title: { display: true, text: u.flow } }, y: { title: { display: true, text: u.specific_power }, beginAtZero: true } } },
  });
  make("chart-duration", {
    type: "line",
    data: { datasets: [{ label: "flow exceeded this share of the time", data: d.duration, borderColor: palette[2], backgroundColor: palette[2] + "44", fill: true, pointRadius: 0 }] },
    options: { parsing: false, scales: { x: { type: "linear", min: 0, max: 100, title: { display: true, text: "% of time" } }, y: { beginAtZero: true, title: { display: true, text: u.flow } } } },
  });
  make("chart-leaks", {
    type: "bar",
    data: { labels: d.leaks.map((l) => l.label), datasets: [
      { label: "leak flow at operating pressure", data: d.leaks.map((l) => l.y), backgroundColor: palette[3] },
      { label: "uncertainty range (low to high)", data: d.leaks.map((l) => [l.low, l.high]), backgroundColor: palette[3] + "44" },
    ] },
    options: { scales: { y: { beginAtZero: true, title: { display: true, text: u.flow } } } },
  });
  // Every annual figure withheld (not enough data): words instead of bare axes.
  if (d.heat_balance.mwh.every((v) => v === null)) {
    const box = document.getElementById("chart-heat");
    if (box) box.parentElement.replaceWith(A.el("p", { class: "note", id: "heat-chart-note" },
      "No heat balance: its annual figures are not enough data (see \u201cIs the data enough?\u201d)."));
  }
  make("chart-heat", {
    type: "bar",
    data: { labels: d.heat_balance.labels, datasets: [{ label: "MWh per year", data: d.heat_balance.mwh, backgroundColor: [palette[0], palette[3], palette[1], palette[2]] }] },
    options: { indexAxis: "y", plugins: { legend: { display: false } }, scales: { x: { beginAtZero: true } } },
  });

  // Weekday x hour map, drawn by hand on its canvas (Chart.js has no matrix type built in).
  function heatmap() {
    const canvas = document.getElementById("chart-heatmap");
    if (!canvas) return;
    const box = canvas.parentElement.getBoundingClientRect();
    const ratio = window.devicePixelRatio || 1;
    canvas.width = box.width * ratio;
    canvas.height = box.height * ratio;
    const ctx = canvas.getContext("2d");
    ctx.scale(ratio, ratio);
    const days = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"];
    const left = 36, top = 6, bottom = 22, right = 60;
    const w = (box.width - left - right) / 24, h = (box.height - top - bottom) / 7;
    const vals = d.heatmap.flat().filter((v) => v !== null);
    const max = Math.max(...vals, 1e-9);
    ctx.font = "11px sans-serif";
    ctx.fillStyle = "#17232b";
    d.heatmap.forEach((row, di) => {
      ctx.fillStyle = "#17232b";
      ctx.fillText(days[di], 2, top + di * h + h / 2 + 4);
      row.forEach((v, hi) => {
        if (v === null) { ctx.fillStyle = "#e4e8ea"; } else {
          const k = v / max;
          ctx.fillStyle = "rgb(" + Math.round(233 - 218 * k) + "," + Math.round(245 - 169 * k) + "," + Math.round(242 - 150 * k) + ")";
        }
        ctx.fillRect(left + hi * w, top + di * h, w - 1, h - 1);
      });
    });
    ctx.fillStyle = "#17232b";
    for (let hi = 0; hi < 24; hi += 3) ctx.fillText(String(hi).padStart(2, "0"), left + hi * w, box.height - 6);
    // The legend: the darkest cell's value with its unit in the reader's units (the flow's
    // reference on a line of its own), then the scale from that value down to nothing.
    const lx = box.width - right + 8;
    const [unit, ...ref] = u.flow.split(" ");
    ctx.fillText("max", lx, top + 12);
    ctx.fillText(max.toFixed(1), lx, top + 26);
    ctx.fillText(unit, lx, top + 40);
    if (ref.length) ctx.fillText(ref.join(" "), lx, top + 54);
    const y0 = top + 62, y1 = box.height - bottom - 12;
    if (y1 - y0 > 20) {
      const g = ctx.createLinearGradient(0, y0, 0, y1);
      g.addColorStop(0, "rgb(15,76,92)");
      g.addColorStop(1, "rgb(233,245,242)");
      ctx.fillStyle = g;
      ctx.fillRect(lx, y0, 12, y1 - y0);
      ctx.fillStyle = "#17232b";
      ctx.fillText("0", lx + 16, y1);
    }
    canvas.setAttribute("aria-label", "mean demand by weekday and hour, " + u.flow + ": from 0 (lightest) to "
      + max.toFixed(1) + " " + u.flow + " (darkest)");
    canvas.dataset.legend = max.toFixed(1) + " " + u.flow;
  }
  heatmap();
  window.addEventListener("resize", heatmap);

  // The measure plan: the order in which the measures are stacked and those left out.
  const plan = document.getElementById("plan-form");
  if (plan) {
    const url = "/api/v1/audits/" + d.audit_id + "/measures";
    const save = async (change) => {
      const cur = await A.json(url);
      await A.json(url, {
        method: "PUT", headers: { "Content-Type": "application/json" }, body: JSON.stringify(Object.assign(cur, change(cur))),
      });
      window.location.reload();
    };
    plan.addEventListener("submit", (e) => {
      e.preventDefault();
      const rows = [...plan.querySelectorAll("input[data-kind]")].map((i) => [Number(i.value), i.getAttribute("data-kind")]);
      rows.sort((a, b) => a[0] - b[0]);
      const out = [...plan.querySelectorAll("input[data-exclude]:checked")].map((i) => i.getAttribute("data-exclude"));
      const order = [];
      for (const [, k] of rows) if (!order.includes(k) && !out.includes(k)) order.push(k);
      save((cur) => ({ order, excluded: [...new Set([...(cur.excluded || []), ...out])] })).catch((x) => alert(x.message));
    });
    plan.querySelector("[data-reset-plan]").addEventListener("click", () => save(() => ({ order: [], excluded: [] })).catch((x) => alert(x.message)));
  }
  for (const form of document.querySelectorAll(".cost-form")) {
    const kind = form.getAttribute("data-kind");
    const put = async (value) => {
      await A.json("/api/v1/audits/" + d.audit_id + "/costs/" + kind, {
        method: "PUT", headers: { "Content-Type": "application/json" }, body: JSON.stringify({ implementation_cost: value }),
      });
      window.location.reload();
    };
    form.addEventListener("submit", (e) => { e.preventDefault(); put(Number(form.elements.implementation_cost.value)).catch((x) => alert(x.message)); });
    form.querySelector("[data-reset]").addEventListener("click", () => put(null).catch((x) => alert(x.message)));
  }
})();
