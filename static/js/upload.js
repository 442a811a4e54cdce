// The upload page: choose a file, sniff it on the server, map its columns, import with progress,
// then show the data-quality report. All user text is placed with textContent (never as HTML).
"use strict";
(function () {
  const A = window.airledger;
  const data = A.pageData();
  if (!data) return;
  const $ = (id) => document.getElementById(id);
  const UNITS = data.units; // quantity -> [unit, ...]
  const E = data.entry; // the reader's input units (core::entry)
  const tz = data.timezone || "UTC";
  const isLineFlow = (unit) => /^a(cfm|m3)/.test(unit || "");
  const fromStored = (kind, v) => A.entry.text(E.fields[kind], (v - E.fields[kind].offset) / E.fields[kind].factor);
  const toStored = (kind, v) => v * E.fields[kind].factor + E.fields[kind].offset;
  let file = null;
  const ZONES = new Set(Array.from(document.querySelectorAll("#zones option"), (o) => o.value));
  const zoneOk = (z) => ZONES.has(z);
  let sniffed = null;
  // The mapping this layout was imported with before, when the audit holds one: the form is filled
  // from it, and so are the columns' notes (the header's guess would contradict it).
  let remembered = null;
  // The first data rows' time cells as the mapping reads them (a time column's after a space).
  const timeCells = () => {
    if (!sniffed) return [];
    const c = sniffed.header.indexOf($("m-ts-column").value), t = sniffed.header.indexOf($("m-ts-time").value);
    if (c < 0) return [];
    return (sniffed.preview || []).map((r) => (r[c] || "").trim() + (t >= 0 ? " " + (r[t] || "").trim() : "")).filter((x) => x.trim());
  };
  const readDates = A.datePreview({
    auditId: data.audit_id, cells: timeCells, select: $("m-reading"), format: $("m-ts-format"), zone: $("m-ts-zone"),
    list: $("date-preview"), interval: () => $("m-interval").value, also: [$("m-ts-column"), $("m-ts-time"), $("m-interval")],
  });

  const drop = $("dropzone");
  drop.addEventListener("dragover", (e) => { e.preventDefault(); drop.classList.add("over"); });
  drop.addEventListener("dragleave", () => drop.classList.remove("over"));
  drop.addEventListener("drop", (e) => {
    e.preventDefault();
    drop.classList.remove("over");
    if (e.dataTransfer.files.length) choose(e.dataTransfer.files[0]);
  });
  $("file-input").addEventListener("change", (e) => { if (e.target.files.length) choose(e.target.files[0]); });

  async function choose(f) {
    file = f;
    $("choose-status").textContent = "Reading " + f.name + " (" + (f.size / 1048576).toFixed(1) + " MB)\u2026";
    const fd = new FormData();
    fd.append("file", f.slice(0, 65536), f.name);
    try {
      const r = await A.json("/api/v1/audits/" + data.audit_id + "/sniff", { method: "POST", body: fd });
      sniffed = r.sniffed;
      remembered = r.remembered_mapping || null;
      const mapping = remembered || r.suggested_mapping;
      $("map-note").textContent = r.remembered_mapping
        ? "This logger's layout was mapped before: the earlier mapping is filled in. Check it."
        : "Suggested from the file's header and first rows. Check every column.";
      $("choose-status").textContent = f.name + ": " + sniffed.header.length + " columns, names on line " + sniffed.header_line +
        (sniffed.units_line ? ", units on line " + sniffed.units_line : "") + ", data from line " + sniffed.first_data_line + ", encoding " + (sniffed.encoding === "utf-8" ? "UTF-8" : "Windows-1252 / Latin-1") + ".";
      showMapping(mapping);
    } catch (err) {
      $("choose-status").textContent = "This file cannot be read: " + err.message;
    }
  }

  function option(value, label, selected) {
    return A.el("option", { value: value, selected: selected }, label);
  }

  // Quantities as people say them (the mapping's codes are the option values).
  const QUANTITY = { power: "power", energy: "energy counter", current: "current", pressure: "pressure", flow: "flow", temperature: "temperature" };
  const POINTS = [["discharge", "compressor discharge"], ["after_treatment", "after treatment"], ["header", "header"], ["point_of_use", "point of use"]];
  const ROLE = { header: "names", units: "units", header_upper: "header", skipped: "skipped", preamble: "", blank: "blank", data: "" };

  // Marks the preview's rows from the layout fields, so a corrected line number shows at once.
  function markPreview() {
    const header = Number($("m-header").value);
    const units = Number($("m-units-line").value) || null;
    let first = Number($("m-first-data").value) || null;
    if (!first) {
      const after = units || header;
      const next = sniffed.lines.find((l) => l.line > after && l.role !== "blank");
      first = next ? next.line : after + 1;
    }
    for (const tr of $("preview").querySelectorAll("tbody tr")) {
      const line = Number(tr.getAttribute("data-line"));
      tr.className = "";
      let label = "";
      if (line === header) { tr.classList.add("role-header"); label = "names"; }
      else if (line === units) { tr.classList.add("role-units"); label = "units"; }
      else if (line === first) { tr.classList.add("role-first"); label = "first data row"; }
      else if (line > header && line < first) { tr.classList.add("role-skip"); label = "skipped"; }
      else if (line < header) { tr.classList.add("role-before"); label = ROLE[tr.getAttribute("data-role")] || ""; }
      tr.querySelector(".lineno").textContent = "line " + line + (label ? " \u00b7 " + label : "");
    }
  }

  for (const id of ["m-header", "m-units-line", "m-first-data"]) $(id).addEventListener("input", () => { if (sniffed) markPreview(); });
  // Another names line: its cells become the columns to map (when the preview shows that line).
  $("m-header").addEventListener("change", () => {
    const l = sniffed && sniffed.lines.find((x) => x.line === Number($("m-header").value));
    if (!l) return;
    sniffed.header = l.fields.map((f) => f.trim());
    showMapping(readMapping());
  });

  function showMapping(m) {
    $("step-map").classList.remove("hidden");
    const pv = $("preview");
    pv.replaceChildren();
    const width = Math.max(sniffed.header.length, ...sniffed.lines.map((l) => l.fields.length));
    const head = A.el("tr", {}, A.el("th", {}, "Line"), ...Array.from({ length: width }, (_, i) => A.el("th", {}, String(i + 1))));
    pv.append(A.el("thead", {}, head));
    const body = A.el("tbody");
    for (const l of sniffed.lines) {
      const cells = Array.from({ length: width }, (_, i) => A.el("td", {}, l.fields[i] === undefined ? "" : l.fields[i]));
      body.append(A.el("tr", { "data-line": String(l.line), "data-role": l.role }, A.el("td", { class: "lineno" }, ""), ...cells));
    }
    pv.append(body);

    $("m-delimiter").value = m.delimiter === "tab" ? "\t" : m.delimiter;
    $("m-decimal").value = m.decimal;
    $("m-header").value = m.header_line;
    $("m-units-line").value = m.units_line || "";
    $("m-first-data").value = m.first_data_line || "";
    $("m-encoding").value = m.encoding || "";
    $("m-markers").value = (m.missing_markers || []).join(", ");
    $("markers-note").textContent = (sniffed.markers_seen && sniffed.markers_seen.length)
      ? "Seen in this file and always read as missing: " + sniffed.markers_seen.join(", ") + "."
      : "Empty cells, NaN, N/A, #N/A, #-1, 1.#QNAN, OL, Err, #VALUE! and dashes are always read as missing.";
    const tsCol = $("m-ts-column");
    const tsTime = $("m-ts-time");
    tsCol.replaceChildren(...sniffed.header.map((h) => option(h, h, h === m.timestamp.column)));
    tsTime.replaceChildren(option("", "(none)"), ...sniffed.header.map((h) => option(h, h, h === m.timestamp.time_column)));
    $("m-ts-format").value = m.timestamp.format;
    // The logger's clock keeps the site's zone unless the mapping (or a remembered one) says otherwise.
    // A column whose name says UTC keeps UTC, and the note says why.
    const named = sniffed.timestamp && sniffed.timestamp.timezone;
    const zone = m.timestamp.timezone && (m.timestamp.timezone !== "UTC" || named === "UTC") ? m.timestamp.timezone : tz;
    $("m-ts-zone").value = zone;
    $("zone-note").textContent = named && named === zone && zone !== tz
      ? "The timestamp column\u2019s name \u201c" + m.timestamp.column + "\u201d says " + named + ", so the logger clock is read in " + named + " rather than the site\u2019s " + tz + "."
      : "";
    $("zone-note").hidden = !$("zone-note").textContent;
    $("m-interval").value = m.timestamp.interval || "";
    $("m-offset").value = m.clock_offset_s || 0;
    $("dayfirst").classList.toggle("hidden", !sniffed.day_first_ambiguous);
    delete $("m-reading").dataset.chosen;
    readDates();
    markPreview();

    const notes = {};
    for (const g of sniffed.columns || []) notes[g.column] = g.note;
    if (remembered) {
      // A remembered mapping fills the form: the note says so, in the mapping's own terms.
      for (const h of sniffed.header) notes[h] = "Left out by the remembered mapping of this layout.";
      for (const c of remembered.columns || []) {
        const u = (UNITS[c.quantity] || []).find((x) => x.code === c.unit);
        notes[c.column] = "From the remembered mapping of this layout: " + (QUANTITY[c.quantity] || c.quantity) +
          (c.unit ? " in " + (u ? u.label : c.unit) : "") + (c.compressor ? ", compressor " + c.compressor : "") + ".";
      }
    }
    const tbody = $("columns-table").querySelector("tbody");
    tbody.replaceChildren();
    // The audit's one compressor goes to the first power, energy and current column only: two
    // power columns given the same machine are one channel twice, which the import refuses.
    const taken = new Set((m.columns || []).filter((x) => x.compressor).map((x) => x.quantity));
    for (const h of sniffed.header) {
      if (h === m.timestamp.column || h === m.timestamp.time_column) continue;
      const c = (m.columns || []).find((x) => x.column === h) || { column: h, quantity: "" };
      tbody.append(columnRow(c, notes[h], taken));
    }
  }

  function columnRow(c, note, taken) {
    const q = A.el("select", { class: "q" }, option("", "not read", !c.quantity),
      ...Object.keys(UNITS).map((k) => option(k, QUANTITY[k] || k, k === c.quantity)));
    const u = A.el("select", { class: "u" });
    // An audit with one compressor: its power (or current) is that machine's unless said otherwise.
    const machineQuantity = A.machineQuantity(c.quantity);
    const only = data.compressors.length === 1 && !c.compressor && machineQuantity && !(taken && taken.has(c.quantity))
      ? data.compressors[0] : null;
    if (only && taken) taken.add(c.quantity);
    const comp = A.el("select", { class: "c" }, option("", "\u2014"),
      ...data.compressors.map((t) => option(t, t, t === c.compressor || t === only)));
    const details = A.el("div", { class: "details" });
    const num = (cls, label, value, step) => A.el("label", {}, label + " ",
      A.el("input", { class: cls, type: "number", step: step || "any", value: value === undefined || value === null ? "" : value }));
    function refill() {
      u.replaceChildren(...(UNITS[q.value] || []).map((x) => option(x.code, x.label, x.code === c.unit)));
      // Only a machine's power, energy or current belongs to a compressor: any other row shows
      // the dash, so the form never seems to tie a pressure or an unread column to a machine.
      const machine = A.machineQuantity(q.value);
      comp.disabled = !machine;
      if (!machine) comp.value = "";
      else if (!comp.value) comp.value = c.compressor || only || "";
      details.replaceChildren();
      if (q.value === "current") {
        // Defaults that follow the audit's unit system (ingest::mapping::current_defaults), said
        // as assumptions until someone gives the motor's own figures.
        const D = data.current_defaults;
        details.append(num("volts", "V (line)", c.volts || D.volts), num("phases", "phases", c.phases || D.phases, "1"),
          num("pf", "PF loaded", c.power_factor || D.power_factor), num("upf", "PF unloaded", c.unloaded_power_factor),
          num("ubelow", "unloaded below, A", c.unloaded_below_a));
        if (!c.volts && !c.power_factor) details.append(A.el("span", { class: "hint current-assumed" }, D.note));
      }
      if (q.value === "flow" && isLineFlow(u.value)) {
        // Actual volume: free air only once the line's pressure and temperature are known.
        const line = c.line || {};
        const src = A.el("select", { class: "linesrc" }, option("", "a fixed value", !line.pressure_column),
          ...sniffed.header.filter((h) => h !== c.column).map((h) => option(h, "logged in \u201c" + h + "\u201d", h === line.pressure_column)));
        const fixed = num("linep", "line pressure, " + E.fields.gauge_pressure.label,
          line.pressure_bar_g !== undefined && line.pressure_bar_g !== null ? fromStored("gauge_pressure", line.pressure_bar_g) : "");
        const sync = () => { fixed.hidden = !!src.value; };
        src.addEventListener("change", sync);
        details.append(A.el("label", {}, "line pressure ", src), fixed,
          num("linet", "line temperature, " + E.fields.temperature.label,
            line.temperature_c !== undefined && line.temperature_c !== null ? fromStored("temperature", line.temperature_c) : ""),
          A.el("span", { class: "hint" }, "actual volume at the meter: needed to make it free air (a pressure column must be mapped as pressure too)"));
        sync();
      }
      if (q.value === "pressure") {
        // Where along the air's way it was measured, and the point's name (ISO 11011: supply,
        // transmission, demand); the header unless said otherwise.
        const pt = A.el("select", { class: "point" },
          ...POINTS.map(([code, words]) => option(code, words, code === (c.point || "header"))));
        const name = A.el("input", { class: "plabel", type: "text", maxlength: "80", value: c.label || "", placeholder: c.column });
        details.append(A.el("label", {}, "measured at ", pt), A.el("label", {}, "point's name ", name));
      }
      if (q.value === "flow" && /^(scfm|Nm3|Sm3)/.test(u.value)) {
        const ref = c.reference || {};
        details.append(num("refp", "reference kPa abs", ref.pressure_kpa_abs), num("reft", "reference \u00b0C", ref.temperature_c));
        details.append(A.el("span", { class: "hint" }, "blank: the unit's documented default"));
      }
    }
    q.addEventListener("change", refill);
    u.addEventListener("change", () => { c.unit = u.value; refill(); });
    refill();
    const tr = A.el("tr", { "data-column": c.column }, A.el("td", {}, c.column), A.el("td", {}, q), A.el("td", {}, u), A.el("td", {}, comp), A.el("td", {}, details),
      A.el("td", { class: "hint" }, note || ""));
    return tr;
  }

  function readMapping() {
    const numOr = (row, cls) => {
      const e = row.querySelector("." + cls);
      return e && e.value !== "" ? Number(e.value) : undefined;
    };
    const columns = [];
    for (const row of $("columns-table").querySelectorAll("tbody tr")) {
      const quantity = row.querySelector(".q").value;
      if (!quantity) continue;
      const col = { column: row.getAttribute("data-column"), quantity: quantity, unit: row.querySelector(".u").value };
      const comp = row.querySelector(".c").value;
      if (comp && A.machineQuantity(quantity)) col.compressor = comp;
      if (quantity === "current") {
        col.volts = numOr(row, "volts"); col.phases = numOr(row, "phases"); col.power_factor = numOr(row, "pf");
        col.unloaded_power_factor = numOr(row, "upf"); col.unloaded_below_a = numOr(row, "ubelow");
      }
      if (quantity === "flow" && isLineFlow(col.unit)) {
        const line = {};
        const src = row.querySelector(".linesrc");
        const p = numOr(row, "linep"), t = numOr(row, "linet");
        if (src && src.value) line.pressure_column = src.value;
        else if (p !== undefined) line.pressure_bar_g = toStored("gauge_pressure", p);
        if (t !== undefined) line.temperature_c = toStored("temperature", t);
        col.line = line;
      }
      if (quantity === "pressure") {
        const pt = row.querySelector(".point"), name = row.querySelector(".plabel");
        if (pt && pt.value && pt.value !== "header") col.point = pt.value;
        if (name && name.value.trim()) col.label = name.value.trim();
      }
      const rp = numOr(row, "refp"), rt = numOr(row, "reft");
      if (rp !== undefined && rt !== undefined) col.reference = { pressure_kpa_abs: rp, temperature_c: rt };
      columns.push(col);
    }
    const format = $("m-ts-format").value;
    const m = {
      delimiter: $("m-delimiter").value, decimal: $("m-decimal").value, header_line: Number($("m-header").value),
      timestamp: { column: $("m-ts-column").value, format: format, timezone: $("m-ts-zone").value || "UTC" },
      columns: columns, clock_offset_s: Number($("m-offset").value || 0),
    };
    if ($("m-units-line").value) m.units_line = Number($("m-units-line").value);
    if ($("m-first-data").value) m.first_data_line = Number($("m-first-data").value);
    const markers = $("m-markers").value.split(",").map((x) => x.trim()).filter(Boolean);
    if (markers.length) m.missing_markers = markers;
    if ($("m-encoding").value) m.encoding = $("m-encoding").value;
    if ($("m-ts-time").value) m.timestamp.time_column = $("m-ts-time").value;
    if ($("m-interval").value) m.timestamp.interval = $("m-interval").value;
    return m;
  }

  $("mapping-form").addEventListener("submit", (e) => {
    e.preventDefault();
    if (!file) return;
    if (!$("dayfirst").classList.contains("hidden") && !$("m-reading").dataset.chosen) {
      $("import-status").textContent = "Choose how the dates are written first (day/month or month/day).";
      $("step-import").classList.remove("hidden");
      return;
    }
    const mapping = readMapping();
    // An actual-volume flow without its line conditions would be read several times too small.
    const bare = mapping.columns.find((c) => c.line && ((c.line.pressure_bar_g === undefined && !c.line.pressure_column) || c.line.temperature_c === undefined));
    if (bare) {
      $("step-import").classList.remove("hidden");
      $("import-status").textContent = "Not imported: column \u201c" + bare.column + "\u201d logs actual volume; give the line's pressure (a value or a logged pressure column) and its temperature beside it.";
      return;
    }
    if (!zoneOk($("m-ts-zone").value.trim())) {
      $("step-import").classList.remove("hidden");
      $("import-status").textContent = "Not imported: \u201c" + $("m-ts-zone").value + "\u201d is not a time zone of the list; choose one such as " + tz + ".";
      $("m-ts-zone").focus();
      return;
    }
    const token = Math.random().toString(36).slice(2) + Date.now().toString(36);
    const fd = new FormData();
    fd.append("mapping", JSON.stringify(mapping));
    fd.append("file", file, file.name);
    const sentName = file.name;
    const q = "?token=" + token + ($("m-replace").checked ? "&replace=true" : "");
    const xhr = new XMLHttpRequest();
    $("step-import").classList.remove("hidden");
    $("import-button").disabled = true;
    $("import-status").textContent = "Uploading\u2026";
    xhr.upload.addEventListener("progress", (ev) => { if (ev.lengthComputable) $("upload-progress").value = (ev.loaded / ev.total) * 100; });
    let poll = null;
    xhr.upload.addEventListener("load", () => {
      $("upload-progress").value = 100;
      $("import-status").textContent = "Importing\u2026";
      poll = setInterval(async () => {
        try {
          const p = await A.json("/api/v1/imports/" + token);
          if (p.state === "waiting") $("import-status").textContent = "Waiting for another import to finish\u2026";
          if (p.state === "importing" && p.bytes_total) {
            $("import-progress").value = (p.bytes_done / p.bytes_total) * 100;
            $("import-status").textContent = "Importing\u2026 " + A.count(p.readings) + " readings so far";
          }
        } catch (_) { /* the import may just have finished */ }
      }, 400);
    });
    xhr.addEventListener("loadend", () => {
      if (poll) clearInterval(poll);
      $("import-button").disabled = false;
      let body = {};
      try { body = JSON.parse(xhr.responseText); } catch (_) { /* not JSON */ }
      if (xhr.status === 201 || xhr.status === 200) {
        $("import-progress").value = 100;
        $("import-status").textContent = xhr.status === 200
          ? "This file was imported before with this same mapping: nothing was added. Change the mapping to read it another way."
          : body.replaced_upload_id ? "Imported with this mapping, in place of the earlier import of the same file." : "Imported.";
        showResult(body, sentName);
        refreshFiles();
      } else {
        const er = body.error || { message: "HTTP " + xhr.status };
        const where = [er.line ? "line " + er.line : null, er.column ? "column \u201c" + er.column + "\u201d" : null, er.column ? null : A.fieldWords(er.field)].filter(Boolean).join(", ");
        $("import-status").textContent = "Not imported, nothing was stored: " + er.message + (where ? " (" + where + ")" : "");
      }
    });
    xhr.open("POST", "/api/v1/audits/" + data.audit_id + "/uploads" + q);
    xhr.send(fd);
  });

  // The list of the audit's files as the server draws it (with its remap and delete links), so
  // the file just imported shows at once, as it would after a reload.
  async function refreshFiles() {
    try {
      const r = await fetch("/audits/" + data.audit_id + "/upload", { headers: { Accept: "text/html" } });
      if (!r.ok) return;
      const doc = new DOMParser().parseFromString(await r.text(), "text/html");
      const fresh = doc.getElementById("files");
      if (fresh) $("files").replaceChildren(...Array.from(fresh.childNodes, (n) => document.importNode(n, true)));
    } catch (_) { /* the list stays as it was; a reload shows it */ }
  }

  // The import's result, the file named as it was chosen (never the upload's internal number).
  function showResult(r, name) {
    $("step-result").classList.remove("hidden");
    const box = $("result");
    box.replaceChildren();
    const dl = A.el("dl", { class: "facts" });
    const add = (k, v) => { dl.append(A.el("dt", {}, k), A.el("dd", {}, v)); };
    add("File", name);
    add("Rows", A.count(r.rows || 0));
    add("Readings", A.count(r.readings || 0));
    const at = (t) => { const ms = Date.parse(t); return isNaN(ms) ? t : A.localTime(ms, tz); };
    // Times and the interval as the server words them (the zone's abbreviation, as the file
    // table and preview show it; "15 min"), else formatted here.
    if (r.first) add("From", r.first_local || at(r.first));
    if (r.last) add("To", r.last_local || at(r.last));
    if (r.interval_s) add("Interval", r.interval_words || r.interval_s + " s");
    box.append(dl);
    if (r.channels && r.channels.length) {
      const t = A.el("table", { class: "data" }, A.el("thead", {}, A.el("tr", {}, A.el("th", {}, "Channel"), A.el("th", {}, "Quantity"), A.el("th", {}, "Readings"), A.el("th", {}, "From (site time, " + tz + ")"), A.el("th", {}, "To"))));
      const tb = A.el("tbody");
      for (const c of r.channels) tb.append(A.el("tr", {}, A.el("td", {}, c.compressor ? c.compressor + " (" + c.label + ")" : c.label), A.el("td", {}, c.quantity), A.el("td", { class: "num" }, A.count(c.readings)), A.el("td", {}, c.first_local || at(c.first)), A.el("td", {}, c.last_local || at(c.last))));
      t.append(tb);
      box.append(t);
    }
    // In the reader's units where the reply gives the warnings in parts (one for one).
    const parts = r.warning_parts || [];
    const w = parts.length && parts.length === (r.warnings || []).length ? parts.map((p) => A.renderParts(p, E)) : r.warnings || [];
    box.append(A.el("h3", {}, "Data quality"));
    if (!w.length) box.append(A.el("p", {}, "No gaps, duplicates, flat lines, out-of-range values, counter resets or daylight-saving problems were found."));
    else box.append(A.el("ul", {}, ...w.map((x) => A.el("li", {}, x))));
  }
})();
