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
  async json(url, options) {
    const r = await fetch(url, options);
    const body = await r.json().catch(() => ({}));
    if (!r.ok) {
      const e = body && body.error ? body.error : { message: "HTTP " + r.status };
      const where = [e.line ? "line " + e.line : null, e.column ? "column \u201c" + e.column + "\u201d" : null,
        e.field ? "field " + e.field : null].filter(Boolean).join(", ");
      throw new Error(e.message + (where ? " (" + where + ")" : ""));
    }
    return body;
  },
};
document.addEventListener("click", (ev) => {
  const t = ev.target;
  if (t && t.matches && t.matches("[data-print]")) window.print();
});
