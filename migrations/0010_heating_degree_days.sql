-- Heat recovery for space heating by the degree-day method: each month's heating degree-days
-- (K·d, January first, comma separated; empty when not given) and the space's annual heat need
-- (kWh of heat; NULL when not known). Given, the degree-days replace the heating months.
ALTER TABLE audit ADD COLUMN heating_degree_days_k_day TEXT NOT NULL DEFAULT '';
ALTER TABLE audit ADD COLUMN annual_space_heat_kwh REAL;
