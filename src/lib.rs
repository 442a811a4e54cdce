/*!
airledger: a local web dashboard for shop compressed-air system auditing.

The module map (data takes one way: file -> `ingest` -> `store` -> `core` -> `app` -> `web`):

- [`core`]: the pure physics and audit arithmetic (units, air, compression, series alignment,
  compressor states, specific power, leaks, heat, recommendations). No IO, no async, no SQL.
- [`ingest`]: logger CSV files in: encoding, sniffing, the column mapping, streaming parse to SI
  readings, the data-quality report.
- [`store`]: SQLite through sqlx: audits, chunked readings, rollups, field tests, caches.
- [`site`]: the site as people describe it (air, prices, compressors, receivers) and its
  validation.
- [`app`]: the application object, [`app::App`]: the database and everything kept in memory around
  it (the summary and its caches, imports, field tests, scenarios, the demo install).
- [`web`]: axum router, pages (askama) and the JSON API.
- [`demo`]: the invented demo plant, simulated and written as logger files.
- [`cli`]: the command line.
*/

pub mod app;
pub mod cli;
pub mod core;
pub mod demo;
pub mod ingest;
pub mod site;
pub mod store;
pub mod web;
