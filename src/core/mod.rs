/*!
The pure core: the physics and the audit arithmetic. Nothing here does IO, awaits, or knows SQL or HTTP;
it is plain functions over plain data, each module with its unit tests beside it.

Architecture invariant: `core` imports nothing from `store`, `ingest` or `web`.

- [`units`]: the canonical SI types and reference conditions; [`air`]: the atmosphere (ISO 2533);
  [`basis`]: the basis a reading was logged on (gauge, reference, line) and the site's air applied
  to it when read;
  [`unit_table`]: the one table of unit spellings a logger file may use, with their SI factors.
- [`thermo`]: isothermal, isentropic and polytropic compression, staging, cooler duties.
- [`series`]: one timeline: alignment of channels into equal bins, integration.
- [`states`]: compressor states from power, loaded fractions, cycles, flow from states.
- [`partload`]: the one part-load model (load/unload on storage, modulation, variable speed,
  start/stop) behind the marginal specific power and the replay's blow-down.
- [`leaks`]: bleed-down, load/unload, orifice, decay fits; [`fieldtest`]: the API's field tests.
- [`safety`]: the cautions shown wherever a test or a measure touches pressure equipment or heat.
- [`heat`]: heat of compression rejected and recoverable, and its value.
- [`analysis`]: the audit summary, one room per topic (uncertainty, calendar, machines, specific
  power, production, control, pressure, demand, baseline, leaks, heat, decay) and decay-event
  detection; [`recommend`]: measures with savings and payback, their words in parts.
- [`entry`]: what a person types into a form in the reader's units, and its stored value.
- [`display`]: formatting every figure a person sees with its unit, SI or US customary, and the
  measures' parts in a reader's units.
- [`plot`]: typed, downsampled figures drawn as inline SVG for paper (path data, axes, escaping).
- [`model`]: the plain description of a site, its compressors and storage.
- [`costs`]: the one table of default implementation costs; [`simulate`]: the what-if replay of
  the logged demand through a changed compressor room.
*/

pub mod air;
pub mod analysis;
pub mod basis;
pub mod costs;
pub mod datasheet;
pub mod display;
pub mod entry;
pub mod fieldtest;
pub mod heat;
pub mod leaks;
pub mod levels;
pub mod model;
pub mod partload;
pub mod plot;
pub mod recommend;
pub mod safety;
pub mod series;
pub mod simulate;
pub mod states;
pub mod thermo;
pub mod treatment;
pub mod unit_table;
pub mod units;
