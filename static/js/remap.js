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
  A.datePreview({
    auditId: data.audit_id, cells: () => data.time_cells, select: $("m-reading"), format: $("m-ts-format"),
    zone: $("m-ts-zone"), list: $("date-preview"), interval: () => data.interval || "",
  });
})();
