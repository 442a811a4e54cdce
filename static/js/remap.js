// The remap page: the date readings and the first rows' times follow the choices as they are
// made (the server reads them: POST /api/v1/audits/{id}/date-readings). Without scripts the
// page's "show how the times read" button does the same by drawing the page again.
"use strict";
(function () {
  const A = window.airledger;
  const data = A.pageData();
  if (!data) return;
  const $ = (id) => document.getElementById(id);
  const button = $("preview-dates");
  if (button) button.hidden = true;
  // Each row's units follow its quantity: the other quantities' units are hidden (a power
  // column offered psig was refused on saving), and only a machine's power, energy or current
  // takes a compressor. Without scripts every unit stays offered, grouped by quantity.
  for (const qs of document.querySelectorAll("select[name$='_quantity']")) {
    const row = qs.closest("tr");
    const us = row && row.querySelector("select[name$='_unit']");
    const cs = row && row.querySelector("select[name$='_compressor']");
    if (!us) continue;
    const follow = () => {
      let first = null;
      for (const g of us.querySelectorAll("optgroup")) {
        const mine = g.dataset.quantity === qs.value;
        g.hidden = !mine;
        for (const o of g.querySelectorAll("option")) {
          o.disabled = !mine;
          if (mine && !first) first = o;
        }
      }
      const chosen = us.selectedOptions[0];
      if (!chosen || chosen.disabled || (!chosen.value && qs.value)) {
        if (first) us.value = first.value; else us.value = "";
      }
      // Left enabled, so that the dash is sent and clears a compressor the column had before.
      if (cs && !A.machineQuantity(qs.value)) cs.value = "";
    };
    qs.addEventListener("change", follow);
    follow();
  }
  A.datePreview({
    auditId: data.audit_id, cells: () => data.time_cells, select: $("m-reading"), format: $("m-ts-format"),
    zone: $("m-ts-zone"), list: $("date-preview"), interval: () => data.interval || "",
  });
})();
