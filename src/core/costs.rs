/*!
The one table of default implementation costs, shared by the measures (`recommend`) and the what-if
replay (`simulate`), so that a repaired leak or a new set-point costs the same in both. Every figure
is a common-practice installed cost from memory, in the audit's currency, and an auditor may replace
the rate of a measure per audit (`recommend::CostOverrides`).
*/

/// Installed cost of a fixed-speed compressor per kW rated (a replacement, or one added in a replay).
pub const PER_KW_FIXED_SPEED: f64 = 400.0;
/// Installed cost of an added variable-speed compressor per kW rated.
pub const PER_KW_VARIABLE_SPEED: f64 = 550.0;
/// A variable-speed drive for the trim machine, per kW of its rating.
pub const VSD_TRIM_PER_KW: f64 = 350.0;
/// A sequencer, or the controllers' programming for a new order (fixed).
pub const SEQUENCER: f64 = 3000.0;
/// An added receiver: fixed part (piping, valves, inspection) and per m³.
pub const STORAGE_FIXED: f64 = 1000.0;
pub const STORAGE_PER_M3: f64 = 1500.0;
/// A new set-point (engineering, set-point changes), fixed.
pub const SET_PRESSURE: f64 = 2000.0;
/// Leak repair: the survey (fixed) and per m³/min of free air repaired.
pub const LEAK_SURVEY: f64 = 1500.0;
pub const LEAK_PER_M3_MIN: f64 = 1000.0;
/// Heat recovery per kW of recoverable heat at full load.
pub const HEAT_RECOVERY_PER_KW: f64 = 250.0;
/// Shutting idle machines off out of production (a timer or sequencer rule), per compressor.
pub const SHUT_OFF_PER_COMPRESSOR: f64 = 800.0;
/// Dew-point dependent switching retrofitted to a desiccant dryer (sensor and controller), per dryer.
pub const DEW_POINT_CONTROL_PER_DRYER: f64 = 2500.0;
/// A level-sensing (zero-loss) drain in place of a timer drain, installed, per drain.
pub const ZERO_LOSS_DRAIN: f64 = 500.0;
/// An electric alternative (blower, fan, motor) for one inappropriate use, installed, per use line.
pub const ALTERNATIVE_PER_USE: f64 = 1500.0;
/// One filter element changed (element, gaskets and labour), when the record gives no cost.
pub const FILTER_ELEMENT: f64 = 300.0;
/// A cycling or variable refrigerated dryer in place of a non-cycling one, installed, per m³/min of
/// rated flow.
pub const CYCLING_DRYER_PER_M3_MIN: f64 = 600.0;
