-- Data-sheet fields of a compressor (ISO 1217 data sheets): no-load power, the motor's nameplate (for
-- reference) and the highest working pressure. Nullable: a blank field takes the documented default
-- (core::datasheet), so every audit stored before this migration reads as it did.
-- `rated_power_kw` keeps its meaning, now documented: package input power at full load and rated pressure.
ALTER TABLE compressor ADD COLUMN no_load_power_kw REAL;
ALTER TABLE compressor ADD COLUMN nameplate_motor_kw REAL;
ALTER TABLE compressor ADD COLUMN max_pressure_bar_g REAL;
-- The auditor's correction of the unloaded and loaded power levels found in the log (core::levels).
ALTER TABLE compressor ADD COLUMN unloaded_level_kw REAL;
ALTER TABLE compressor ADD COLUMN loaded_level_kw REAL;
