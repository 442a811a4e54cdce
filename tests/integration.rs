//! The one integration-test binary: every suite drives the real server over HTTP against a real
//! SQLite file in a fresh temporary folder (see `support`).

#[path = "support/mod.rs"]
mod support;

#[path = "integration/api.rs"]
mod api;
#[path = "integration/browser.rs"]
mod browser;
#[path = "integration/correct16.rs"]
mod correct16;
#[path = "integration/engine.rs"]
mod engine;
#[path = "integration/flow16.rs"]
mod flow16;
#[path = "integration/forms.rs"]
mod forms;
#[path = "integration/guard.rs"]
mod guard;
#[path = "integration/hostile_ingest.rs"]
mod hostile_ingest;
#[path = "integration/hostile_load.rs"]
mod hostile_load;
#[path = "integration/hostile_store.rs"]
mod hostile_store;
#[path = "integration/hostile_validation.rs"]
mod hostile_validation;
#[path = "integration/hostile_web.rs"]
mod hostile_web;
#[path = "integration/import_words.rs"]
mod import_words;
#[path = "integration/ingest.rs"]
mod ingest;
#[path = "integration/measures16.rs"]
mod measures16;
#[path = "integration/pages.rs"]
mod pages;
#[path = "integration/partload.rs"]
mod partload;
#[path = "integration/quality16.rs"]
mod quality16;
#[path = "integration/reader_units.rs"]
mod reader_units;
#[path = "integration/real_files.rs"]
mod real_files;
#[path = "integration/refusals16.rs"]
mod refusals16;
#[path = "integration/thin_advice.rs"]
mod thin_advice;
#[path = "integration/thin_counter.rs"]
mod thin_counter;
#[path = "integration/thin_files.rs"]
mod thin_files;
#[path = "integration/treat16.rs"]
mod treat16;
#[path = "integration/treatment.rs"]
mod treatment;
#[path = "integration/undo.rs"]
mod undo;
#[path = "integration/walk16.rs"]
mod walk16;
#[path = "integration/walkfix16.rs"]
mod walkfix16;
#[path = "integration/whatif16.rs"]
mod whatif16;
