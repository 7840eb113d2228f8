-- Loads the invented demo extracts that 'riskaudit demo' writes
-- (development.csv, later.csv: Ostbrook Valley Health, a fictional
-- hospital group; no real patients) into typed tables, for the tests
-- that read cohorts from PostgreSQL. Run by testdata/postgres/load.sh
-- from the folder holding the two files. The surgery date is the
-- extract's (invented) admission date, and the hospital its invented one.
\set ON_ERROR_STOP on

CREATE TYPE smoking AS ENUM ('never', 'former', 'current');

CREATE TEMP TABLE raw (patient_ref text, age text, sex text, bmi text, smoker text,
  albumin text, op_minutes text, lung_disease text, ppc_30d text, hospital text, admission_date text);

CREATE TABLE ovh_development (
  patient_ref  text PRIMARY KEY,
  surgery_date date NOT NULL,
  age          integer,
  sex          char(1),
  bmi          real,
  smoker       smoking,
  albumin      numeric(4,1),
  op_minutes   integer,
  lung_disease text,
  ppc_30d      text,
  hospital     text
);
CREATE TABLE ovh_later (LIKE ovh_development INCLUDING ALL);

\copy raw FROM 'development.csv' WITH (FORMAT csv, HEADER true)
INSERT INTO ovh_development
SELECT patient_ref, admission_date::date, age::integer, sex,
       NULLIF(NULLIF(bmi, 'NA'), '')::real, smoker::smoking, NULLIF(NULLIF(albumin, 'NA'), '')::numeric(4,1),
       op_minutes::integer, lung_disease, ppc_30d, hospital
FROM raw;
TRUNCATE raw;

\copy raw FROM 'later.csv' WITH (FORMAT csv, HEADER true)
INSERT INTO ovh_later
SELECT patient_ref, admission_date::date, age::integer, sex,
       NULLIF(NULLIF(bmi, 'NA'), '')::real, smoker::smoking, NULLIF(NULLIF(albumin, 'NA'), '')::numeric(4,1),
       op_minutes::integer, lung_disease, ppc_30d, hospital
FROM raw;

-- A column of risks some other model wrote, and the outcome as boolean,
-- integer and text (an invented formula, for --predicted audits).
CREATE VIEW ovh_later_risks AS
SELECT patient_ref, surgery_date,
       1 / (1 + exp(-(-2.9 + 0.045 * (age - 65) + 0.7 * (lung_disease = 'yes')::int))) AS vendor_risk,
       ppc_30d = 'yes' AS ppc_bool, (ppc_30d = 'yes')::int AS ppc_int, ppc_30d AS ppc_text
FROM ovh_later;

-- A role that may only read, as an audit account would be.
CREATE ROLE auditor LOGIN PASSWORD 'auditor-secret';
GRANT SELECT ON ovh_development, ovh_later, ovh_later_risks TO auditor;
ANALYZE;
