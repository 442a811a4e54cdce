// Shared helpers for airledger's pages. No inline scripts anywhere: pages pass data as JSON in
// <script type="application/json"> elements and these files read it.
"use strict";
window.airledger = {
  pageData(id) {
    const el = document.getElementById(id || "page-data");
    return el ? JSON.parse(el.textContent) : null;
  },
  el(tag, attrs, ...children) {
    const e = document.createElement(tag);
    for (const [k, v] of Object.entries(attrs || {})) {
      if (k === "class") e.className = v;
      else if (k === "text") e.textContent = v;
      else if (v !== null && v !== undefined && v !== false) e.setAttribute(k, v === true ? "" : v);
    }
    for (const c of children) e.append(c instanceof Node ? c : document.createTextNode(String(c)));
    return e;
  },
  // Inputs in the reader's units: a field with data-entry="<kind>" is typed in the unit the page
  // data's `entry` table names for that kind (core::entry, NIST SP 811 factors) and posted as the
  // stored value, stored = typed × factor + offset. A field filled from a stored value keeps that
  // value exactly while its text is left as shown, so saving an unchanged form moves nothing.
  entry: {
    unit(table, el) {
      const k = el.getAttribute("data-entry");
      return k && table && table.fields[k] ? table.fields[k] : null;
    },
    stored(table, el) {
      const u = this.unit(table, el);
      if (el.dataset.shown !== undefined && el.value === el.dataset.shown) return Number(el.dataset.stored);
      // A text that is no number goes as typed, for the server to refuse in words.
      const v = window.airledger.number(el.value);
      if (v === null || typeof v === "string") return v;
      return u ? v * u.factor + u.offset : v;
    },
    // A value in the reader's unit `u` as a field shows it (core::entry::Entry::shown): at the
    // unit's decimals, or three significant figures when finer, no trailing zeros.
    text(u, v) {
      if (!Number.isFinite(v)) return "";
      if (!u || u.decimals === undefined || v === 0) return String(Number(v.toPrecision(9)));
      const d = Math.min(15, Math.max(0, u.decimals, 2 - Math.floor(Math.log10(Math.abs(v)))));
      return String(Number(v.toFixed(d)));
    },
    fill(table, el, stored) {
      const u = this.unit(table, el);
      const v = u ? (Number(stored) - u.offset) / u.factor : Number(stored);
      const text = this.text(u, v);
      el.value = text;
      el.dataset.shown = el.value;
      el.dataset.stored = String(stored);
    },
  },
  // Times as the site's clocks show them (IANA zone `tz`), with the zone named.
  wall(ms, tz) {
    const f = new Intl.DateTimeFormat("en-GB", { timeZone: tz || "UTC", year: "numeric", month: "2-digit", day: "2-digit",
      hour: "2-digit", minute: "2-digit", second: "2-digit", hourCycle: "h23" });
    const p = {};
    for (const x of f.formatToParts(new Date(ms))) p[x.type] = x.value;
    return p;
  },
  // The site's offset from UTC at instant `ms`, in ms (+3600000 for CET).
  offsetMs(ms, tz) {
    const p = this.wall(ms, tz);
    return Date.UTC(+p.year, +p.month - 1, +p.day, +p.hour, +p.minute, +p.second) - Math.floor(ms / 1000) * 1000;
  },
  // A time axis' afterBuildTicks: within a few days, as many ticks as labels of ~120 px fit its
  // width (at most `limit`), at round times of the site's clock (a minute to 12 h: the smallest
  // step that fits; 00:00 and 12:00 in Berlin, not 01:00 and 13:00), never at the data's own first
  // and last instants, whose labels fell beside a round tick and ran into it ("11:40Fri 24 Jun
  // 14:26"). Longer spans keep the chart library's own ticks.
  roundTicks(tz, limit) {
    const STEPS_MIN = [1, 5, 10, 15, 30, 60, 120, 180, 360, 720];
    return (scale) => {
      const fit = Math.max(2, Math.min(limit, Math.floor(scale.width / 120)));
      const m = STEPS_MIN.find((x) => (scale.max - scale.min) / (x * 60000) <= fit - 1);
      if (!m || !isFinite(scale.min) || !isFinite(scale.max)) return;
      const step = m * 60000;
      // The first round time of the site's clock at or after `t`: rounded on the clock at `t`, then
      // taken back to UTC with the offset in force at that round time (a change of clocks within
      // the axis keeps the ticks on round local times: 00:00, 06:00 CEST, 12:00 on 29 Mar in
      // Berlin). A round time the clocks skip gives way to the step after it.
      const next = (t) => {
        const o = this.offsetMs(t, tz), round = Math.ceil((t + o) / step) * step;
        return round - this.offsetMs(round - o, tz);
      };
      const ticks = [];
      for (let v = next(scale.min); v <= scale.max; ) {
        ticks.push({ value: v });
        const w = next(v + 1);
        v = w > v ? w : next(v + step);
      }
      if (ticks.length >= 2) scale.ticks = ticks;
    };
  },
  // RFC 3339 with the site's offset: "2026-03-15T02:00:00-06:00".
  isoLocal(ms, tz) {
    const off = Math.round(this.offsetMs(ms, tz) / 60000);
    const p = this.wall(ms, tz);
    const sign = off < 0 ? "-" : "+", a = Math.abs(off);
    const pad = (n) => String(n).padStart(2, "0");
    return p.year + "-" + p.month + "-" + p.day + "T" + p.hour + ":" + p.minute + ":" + p.second +
      (off === 0 ? "Z" : sign + pad(Math.floor(a / 60)) + ":" + pad(a % 60));
  },
  // "Sun 15 Mar 2026 02:00 CST", as the server writes it (pages/words.rs).
  localTime(ms, tz) {
    const p = this.wall(ms, tz), d = new Date(ms), zone = tz || "UTC";
    const part = (opts, type) => (new Intl.DateTimeFormat("en-US", Object.assign({ timeZone: zone }, opts))
      .formatToParts(d).find((x) => x.type === type) || {}).value;
    // The zone's abbreviation as the server's tz database says it ("CET"): en-US knows the
    // American ones only and says "GMT+1" for Berlin, where en-GB says "CET".
    let name = part({ timeZoneName: "short" }, "timeZoneName") || zone;
    if (/^GMT[+-]/.test(name)) {
      const gb = (new Intl.DateTimeFormat("en-GB", { timeZone: zone, timeZoneName: "short" }).formatToParts(d)
        .find((x) => x.type === "timeZoneName") || {}).value;
      if (gb && !/^(GMT|UTC)[+-]/.test(gb)) name = gb;
    }
    return part({ weekday: "short" }, "weekday") + " " + Number(p.day) + " " + part({ month: "short" }, "month") + " " +
      p.year + " " + p.hour + ":" + p.minute + " " + name;
  },
  // Whether a mapped quantity is a machine's (its power, energy or current) and so takes a
  // compressor; any other column belongs to none (the upload and remap pages alike).
  machineQuantity(q) {
    return q === "power" || q === "energy" || q === "current";
  },
  // A count as every page writes it, digits grouped by commas ("1,999"), whatever the browser's
  // language (core::display::num on the server).
  count(n) {
    return Number(n).toLocaleString("en-US", { maximumFractionDigits: 0 });
  },
  // A chart's tick label in the site's time, 24-hour, day before month as the pages write it
  // ("Wed 11 Mar 04:33"): one format for every chart (report, field tests, what-if). Given the
  // axis' range: with the year when it crosses one ("17 Dec 2006"), without the hour when it spans
  // two weeks or more.
  tick(ms, tz, range) {
    const zone = tz || "UTC";
    const year = (t) => new Date(t).toLocaleString("en-GB", { timeZone: zone, year: "numeric" });
    const o = { timeZone: zone, day: "numeric", month: "short" };
    if (range && year(range.min) !== year(range.max)) o.year = "numeric";
    if (!range || range.max - range.min < 14 * 86400000) {
      Object.assign(o, { weekday: "short", hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
    }
    return new Date(ms).toLocaleString("en-GB", o).replace(",", "");
  },
  // The charts' colours, in order: the report gives the i-th series of a quantity the i-th, so a
  // machine keeps its colour from chart to chart (report, field tests).
  palette: ["#0f4c5c", "#f2a541", "#5b8e7d", "#b3261e", "#7a5195", "#2f6690", "#8a6d3b"],
  // A number as typed in a form's text box (inputmode decimal): a decimal point or a decimal comma
  // ("6,5" is 6.5, never the 65 a browser's number box makes of it in an English locale); any other
  // text is given back as typed, for the server to refuse beside its field; an empty box is null
  // (the server says "nothing", never the 0 that Number("") is).
  number(text) {
    const t = String(text === null || text === undefined ? "" : text).trim();
    if (t === "") return null;
    const n = Number(t.replace(",", "."));
    return Number.isFinite(n) && (t.match(/[.,]/g) || []).length <= 1 ? n : t;
  },
  // An API error's field in words for a person; none for a column's own fields (the column is named).
  fieldWords(field) {
    if (!field) return null;
    const words = { "timestamp.timezone": "time zone", "timestamp.format": "how dates are written", "timestamp.column": "timestamp column",
      delimiter: "delimiter", decimal: "decimal mark", header_line: "line with the column names", units_line: "line with the units",
      first_data_line: "first data line" };
    if (words[field]) return words[field];
    // The mapping's columns as a whole, or the logged data (a what-if's "frame"): the message says
    // what is wrong in words, and a code in brackets after it would say nothing more.
    if (field === "columns" || field === "frame") return null;
    // A column's or a what-if change's own fields: the message names them in words.
    if (/^(columns|changes)\[/.test(field)) return null;
    return field.replace(/_(bar_g|m3_min|m3|kw|s|c|mm)$/, "").replace(/[._]/g, " ");
  },
  // The mapping form's dates (upload and remap pages): the server reads the first rows' times under
  // every format that reads them, in the zone given (POST /api/v1/audits/{id}/date-readings); the
  // readings are offered in words in `o.select`, the chosen one's rows listed in `o.list` as
  // "23/11/2026 14:05:00 -> Mon 23 Nov 2026 14:05 CST, America/Chicago". Choosing one sets the
  // advanced format field `o.format`; a change of zone, format or interval reads them again.
  datePreview(o) {
    const A = this;
    let seq = 0;
    async function refresh() {
      const cells = o.cells();
      if (!cells.length) { o.list.replaceChildren(); return; }
      const body = { cells: cells, format: o.format.value.trim() || null, timezone: o.zone.value.trim() || null };
      const iv = o.interval ? o.interval() : "";
      if (iv) body.interval = iv;
      const mine = ++seq;
      try {
        const r = await A.json("/api/v1/audits/" + o.auditId + "/date-readings", {
          method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body),
        });
        if (mine !== seq) return;
        o.select.replaceChildren(...r.readings.map((x) => A.el("option", { value: x.format, selected: x.format === o.format.value },
          x.words + (x.reads_all ? "" : " (does not read every row)"))));
        const chosen = r.readings.find((x) => x.format === o.format.value) || r.readings[0];
        o.list.replaceChildren(...(chosen ? chosen.rows : []).map((row) =>
          A.el("li", {}, row.text + " \u2192 " + (row.reads_as || "not read as a date by this format"))));
      } catch (e) {
        if (mine === seq) o.list.replaceChildren(A.el("li", { class: "warn" }, e.message));
      }
    }
    o.select.addEventListener("change", () => { o.format.value = o.select.value; o.select.dataset.chosen = "yes"; refresh(); });
    o.format.addEventListener("change", refresh);
    o.zone.addEventListener("change", refresh);
    for (const el of o.also || []) el.addEventListener("change", refresh);
    return refresh;
  },
  async json(url, options) {
    const r = await fetch(url, options);
    const body = await r.json().catch(() => ({}));
    if (!r.ok) {
      const e = body && body.error ? body.error : { message: "HTTP " + r.status };
      const where = [e.line ? "line " + e.line : null, e.column ? "column \u201c" + e.column + "\u201d" : null,
        e.column ? null : window.airledger.fieldWords(e.field)].filter(Boolean).join(", ");
      const err = new Error(e.message + (where ? " (" + where + ")" : ""));
      err.field = e.field || null;
      err.said = e.message; // the refusal alone, for beside its field
      // Every field's refusal when several are wrong at once ({field, message} each).
      err.errors = Array.isArray(e.errors) && e.errors.length ? e.errors : [{ field: err.field, message: e.message }];
      throw err;
    }
    return body;
  },
};
// A number stays with its unit when a line wraps (on screen and in print): in figures, the space
// after a digit that is followed by a unit becomes a no-break space (in every table cell: a measure
// names its flow in its title; a price "per 1000 m³" too), a range stays whole (a word joiner after its en dash: "2.72–2.89
// m³/min" never ends a line at "–"), and a unit of several words stays whole ("t CO₂", "US gal"; "free
// air" is one word, which may go to the next line after its unit: a table's flow column stays as
// narrow as "12.5 m³/min", so the findings fit an A4 line). The same holds in the page's main text (a figure's note, the verdict, the methods,
// the field tests in words), but not in its forms, whose texts are read back as typed.
(function joinNumbersToUnits() {
  const join = (n) => {
    // A column too narrow for a range whole (the printed measures' range, td.range) says it
    // "11,482 to 18,127 EUR", which may wrap after "to".
    const narrow = n.parentElement && n.parentElement.closest("td.range");
    n.nodeValue = (narrow ? n.nodeValue.replace(/(\d)–(?=\d)/g, "$1 to ") : n.nodeValue)
      .replace(/(\d) (?=[^\s\d(–-])/g, "$1\u00a0")
      .replace(/(\d)–(?=\d)/g, "$1–\u2060")
      .replace(/(\d\u00a0\S+) (?=CO₂|gal\b|abs\b)/g, "$1\u00a0")
      .replace(/\bfree air\b/g, "free\u00a0air")
      .replace(/\bper (?=1000\b)/g, "per\u00a0");
  };
  for (const el of document.querySelectorAll("table.data td, table.data th, .figure-value, dl.facts dd")) {
    const w = document.createTreeWalker(el, NodeFilter.SHOW_TEXT);
    for (let n = w.nextNode(); n; n = w.nextNode()) join(n);
  }
  const outsideForms = {
    acceptNode: (n) => (n.parentElement && n.parentElement.closest("form, script, style, textarea, select, code, pre")
      ? NodeFilter.FILTER_REJECT : NodeFilter.FILTER_ACCEPT),
  };
  for (const el of document.querySelectorAll("main")) {
    const w = document.createTreeWalker(el, NodeFilter.SHOW_TEXT, outsideForms);
    for (let n = w.nextNode(); n; n = w.nextNode()) join(n);
  }
})();
// A form with a unit switch (select[data-unit-switch], page data `entry_tables` per system): its
// fields with data-entry follow the chosen system. Each value is carried across as the same stored
// quantity (core::entry factors), the labels' units change, and the hidden entry_units field tells
// the server which units the fields now hold. Without scripts the form posts in the units it was
// drawn in.
(function unitSwitch() {
  const data = window.airledger.pageData();
  if (!data || !data.entry_tables) return;
  for (const sel of document.querySelectorAll("select[data-unit-switch]")) {
    const form = sel.form;
    const hidden = form.querySelector("[data-entry-units]");
    for (const h of form.querySelectorAll(".no-script-hint")) h.hidden = true;
    let now = hidden ? hidden.value : "si";
    sel.addEventListener("change", () => {
      const from = data.entry_tables[now], to = data.entry_tables[sel.value];
      if (!from || !to || sel.value === now) return;
      for (const el of form.querySelectorAll("[data-entry]")) {
        const k = el.getAttribute("data-entry"), a = from.fields[k], b = to.fields[k];
        if (!a || !b) continue;
        if (el.value.trim() !== "") {
          const stored = Number(el.value.replace(",", ".")) * a.factor + a.offset;
          el.value = window.airledger.entry.text(b, (stored - b.offset) / b.factor);
        }
      }
      // The currency follows the units while it is still the other system's default (EUR, USD).
      const cur = form.querySelector("[data-currency-default]"), usual = { si: "EUR", us: "USD" };
      if (cur && cur.value.trim() === usual[now] && usual[sel.value]) cur.value = usual[sel.value];
      for (const span of form.querySelectorAll("[data-unit-of]")) {
        const b = to.fields[span.getAttribute("data-unit-of")];
        if (b) span.textContent = b.label;
      }
      now = sel.value;
      if (hidden) hidden.value = now;
    });
  }
})();
// A refusal set beside the field it names in `form` (an API refusal of a form posted as JSON);
// the earlier one taken away. Returns whether the field was found.
window.airledger.besideField = function (form, field, message) {
  for (const old of form.querySelectorAll(".field-error")) old.remove();
  for (const el of form.querySelectorAll("[aria-invalid]")) el.removeAttribute("aria-invalid");
  const name = String(field || "").split("[")[0].split(".").pop();
  const el = name && form.elements.namedItem(name);
  if (!el || !el.insertAdjacentElement) return false;
  el.insertAdjacentElement("afterend", window.airledger.el("span", { class: "field-error", role: "alert" }, message));
  el.setAttribute("aria-invalid", "true");
  el.focus({ preventScroll: true });
  return true;
};
// Words in parts (core::recommend::Part in the JSON: a string, or {quantity, value} in canonical
// units) in the reader's units of the page data's entry table (core::entry), rounded as the
// server's core::display rounds them: a gauge pressure to 0.01 bar(g) or 0.1 psig, a flow to
// three figures (one decimal at most in cfm), a temperature to 0.1 °C or 1 °F.
window.airledger.renderParts = function (parts, entry) {
  const grouped = (v, d) => Number(v).toLocaleString("en-US", { minimumFractionDigits: d, maximumFractionDigits: d });
  const sig = (v) => { const a = Math.abs(v); return a >= 100 ? 0 : a >= 10 ? 1 : a >= 1 ? 2 : 3; };
  const us = entry && entry.system === "us";
  const kinds = { pressure_bar_g: "gauge_pressure", flow_m3_min: "free_air_flow", temperature_c: "temperature" };
  return (parts || []).map((p) => {
    if (typeof p === "string") return p;
    const kind = kinds[p.quantity];
    const u = kind && entry && entry.fields[kind];
    if (!u) return String(p.value);
    const v = (p.value - u.offset) / u.factor;
    const d = kind === "gauge_pressure" ? (us ? 1 : 2) : kind === "temperature" ? (us ? 0 : 1) : us ? Math.min(sig(v), 1) : sig(v);
    return grouped(v, d) + " " + u.label + (kind === "free_air_flow" ? " free air" : "");
  }).join("");
};
// Every refusal of an API reply (`errors`, each {field, message}) set beside its field in `form`,
// the earlier ones taken away; `fieldOf` turns an API field into the form field's name (default:
// its last part). Returns the refusals no field was found for.
window.airledger.besideFields = function (form, errors, fieldOf) {
  for (const old of form.querySelectorAll(".field-error")) old.remove();
  for (const el of form.querySelectorAll("[aria-invalid]")) el.removeAttribute("aria-invalid");
  const left = [];
  let first = null;
  for (const e of errors) {
    const name = fieldOf ? fieldOf(e.field) : String(e.field || "").split("[")[0].split(".").pop();
    const el = name && form.elements.namedItem(name);
    if (!el || !el.insertAdjacentElement) { left.push(e); continue; }
    el.insertAdjacentElement("afterend", window.airledger.el("span", { class: "field-error", role: "alert" }, e.message));
    el.setAttribute("aria-invalid", "true");
    first = first || el;
  }
  if (first) first.focus({ preventScroll: true });
  return left;
};
// A new audit's time zone (input[data-zone-default], drawn as UTC): the browser's own zone when
// the form's list of IANA names offers it; without scripts, or a zone not in the list, UTC stays.
// A zone of the United States also draws the form in US customary units and USD, while the form is
// still as served (SI, EUR): the unit switch's own change converts the values and the currency.
(function zoneDefault() {
  let zone = "";
  try { zone = Intl.DateTimeFormat().resolvedOptions().timeZone || ""; } catch (e) { return; }
  const us = /^(America\/(New_York|Chicago|Denver|Phoenix|Los_Angeles|Anchorage|Adak|Boise|Detroit|Juneau|Sitka|Metlakatla|Yakutat|Nome|Menominee|Indiana\/.+|Kentucky\/.+|North_Dakota\/.+)|Pacific\/Honolulu)$/;
  for (const el of document.querySelectorAll("input[data-zone-default]")) {
    if (el.value !== "UTC" || !zone || !el.list) continue;
    if (![...el.list.options].some((o) => o.value === zone)) continue;
    el.value = zone;
    const sel = el.form && el.form.querySelector("select[data-unit-switch]");
    if (us.test(zone) && sel && sel.value === "si") {
      sel.value = "us";
      sel.dispatchEvent(new Event("change"));
    }
  }
})();
// A form the server refused (pages/refusal.rs): what was typed goes back into its fields (in the
// units it was typed in), the section that holds it opens, and each refusal is set beside its
// field; the page's alert lists them all.
(function () {
  const data = window.airledger.pageData("refused-form");
  if (!data) return;
  const form = [...document.querySelectorAll("form[action]")].find((f) => f.getAttribute("action") === data.action);
  if (!form) return;
  for (const el of form.elements) {
    if (!el.name || el.type === "hidden" || el.type === "submit") continue;
    if (el.type === "checkbox") el.checked = Object.prototype.hasOwnProperty.call(data.values, el.name);
    else if (Object.prototype.hasOwnProperty.call(data.values, el.name)) {
      el.value = data.values[el.name];
      delete el.dataset.shown;
    }
  }
  for (let d = form.closest("details"); d; d = d.parentElement && d.parentElement.closest("details")) d.open = true;
  let first = null;
  for (const e of data.errors) {
    const name = String(e.field || "").split("[")[0].split(".").pop();
    const el = name && form.elements.namedItem(name);
    if (!el || !el.insertAdjacentElement) continue;
    const id = "refused-" + name;
    if (!document.getElementById(id)) {
      el.insertAdjacentElement("afterend", window.airledger.el("span", { class: "field-error", id: id, role: "alert" }, e.message));
    }
    el.setAttribute("aria-invalid", "true");
    el.setAttribute("aria-describedby", id);
    first = first || el;
  }
  (first || form).scrollIntoView({ block: "center" });
  if (first) first.focus({ preventScroll: true });
})();
document.addEventListener("click", (ev) => {
  const t = ev.target;
  if (t && t.matches && t.matches("[data-print]")) window.print();
});
