/**
 * The SQL behind the campaign summary: one statement, so a summary costs one
 * round trip whatever the campaign's size (no query per run or per
 * configuration). The current deltas of the campaign are read once in a CTE
 * and aggregated several ways; PostgreSQL builds the JSON itself.
 *
 * It returns two columns:
 * - `facts` (small, parsed in Node): campaign, run counts, per configuration
 *   and quantity counts by state with mean / scatter / worst, worst
 *   offenders, pooled repeatability per quantity;
 * - `bulk` (large, passed through as text): the per-run trend series and the
 *   repeat groups, which only the charts read. Trend values are rounded to
 *   six decimals (for drawing; the exports carry full precision).
 *
 * Reads the tables of the run and correlation modules (runs, reductions,
 * points, deltas, predictions, configurations) directly; the delta state rule
 * is the correlation module's DELTA_STATE_SQL.
 */
import { DELTA_STATE_SQL } from '$lib/server/correlation/quantities';

/** State names in the order of the integer codes used by the trend series. */
export const STATE_CODES = ['within_tolerance', 'out_of_tolerance', 'not_significant', 'not_available'] as const;

const STATE_CODE_SQL = `CASE state WHEN 'within_tolerance' THEN 0 WHEN 'out_of_tolerance' THEN 1 WHEN 'not_significant' THEN 2 ELSE 3 END`;

/** How many worst offenders the summary lists. */
export const WORST_OFFENDERS = 20;

/** Replacements: `campaignId`. */
export const SUMMARY_SQL = `
WITH rs AS (
  SELECT r.id, r.run_number, r.test_date, r.state, r.repeat_of_run_id,
         row_number() OVER (ORDER BY r.created_at, r.id) AS seq
  FROM runs r
  WHERE r.campaign_id = :campaignId AND NOT r.is_tare
),
raw AS (
  SELECT d.id, d.run_id, d.prediction_id, d.quantity, d.value, d.uncertainty, d.tolerance, d.unit,
         ${DELTA_STATE_SQL} AS state
  FROM deltas d
  WHERE d.is_current AND d.run_id IN (SELECT id FROM rs)
),
dl AS MATERIALIZED (
  SELECT raw.*, rs.seq, rs.run_number, rs.test_date,
         COALESCE(rs.repeat_of_run_id, rs.id) AS group_run_id,
         c.name AS configuration_name, p.configuration_id, p.configuration_version,
         CASE WHEN raw.tolerance > 0 AND raw.value IS NOT NULL THEN abs(raw.value) / raw.tolerance END AS ratio
  FROM raw
  JOIN rs ON rs.id = raw.run_id
  JOIN predictions p ON p.id = raw.prediction_id
  JOIN configurations c ON c.id = p.configuration_id
),
cells AS (
  SELECT configuration_name, quantity,
         count(*) AS n,
         count(value) AS n_values,
         avg(value) AS mean,
         stddev_samp(value) AS stddev,
         (array_agg(value ORDER BY abs(value) DESC NULLS LAST))[1] AS worst,
         max(ratio) AS worst_ratio,
         max(tolerance) AS tolerance,
         max(unit) AS unit,
         count(*) FILTER (WHERE state = 'out_of_tolerance') AS out_of_tolerance,
         count(*) FILTER (WHERE state = 'not_significant') AS not_significant,
         count(*) FILTER (WHERE state = 'within_tolerance') AS within_tolerance,
         count(*) FILTER (WHERE state = 'not_available') AS not_available,
         (array_agg(value ORDER BY seq DESC))[1] AS latest_value,
         (array_agg(state ORDER BY seq DESC))[1] AS latest_state,
         (array_agg(run_number ORDER BY seq DESC))[1] AS latest_run_number
  FROM dl GROUP BY configuration_name, quantity
),
configs AS (
  SELECT name, min(id) AS first_id, array_agg(id ORDER BY version) AS ids, array_agg(version ORDER BY version) AS versions
  FROM configurations
  WHERE campaign_id = :campaignId OR id IN (SELECT DISTINCT configuration_id FROM dl)
  GROUP BY name
),
config_runs AS (
  SELECT c.name, count(DISTINCT r.id) AS runs, count(DISTINCT r.id) FILTER (WHERE dr.run_id IS NOT NULL) AS runs_with_deltas
  FROM runs r
  JOIN configurations c ON c.id = r.configuration_id
  LEFT JOIN (SELECT DISTINCT run_id FROM raw) dr ON dr.run_id = r.id
  WHERE r.campaign_id = :campaignId AND NOT r.is_tare
  GROUP BY c.name
),
groups AS (
  SELECT configuration_name, quantity, group_run_id,
         count(*) AS n, avg(value) AS mean, stddev_samp(value) AS stddev, max(value) - min(value) AS range,
         array_agg(run_id ORDER BY seq) AS run_ids, array_agg(value ORDER BY seq) AS vals
  FROM dl WHERE value IS NOT NULL
  GROUP BY configuration_name, quantity, group_run_id
  HAVING count(*) > 1
),
pooled AS (
  -- Pooled within-group standard deviation: sqrt(Σ(n_i − 1)s_i² / Σ(n_i − 1)).
  SELECT quantity, count(*) AS groups, sum(n) AS runs,
         sqrt(sum((n - 1) * stddev ^ 2) / NULLIF(sum(n - 1), 0)) AS pooled_stddev
  FROM groups GROUP BY quantity
),
worst AS (
  SELECT * FROM dl WHERE state = 'out_of_tolerance' ORDER BY ratio DESC NULLS LAST, seq LIMIT ${WORST_OFFENDERS}
),
counts AS (
  SELECT count(*) AS total,
         count(*) FILTER (WHERE state = 'imported') AS imported,
         count(*) FILTER (WHERE state = 'reduced') AS reduced,
         count(*) FILTER (WHERE state = 'reviewed') AS reviewed,
         count(*) FILTER (WHERE state = 'accepted') AS accepted,
         count(*) FILTER (WHERE state = 'returned') AS returned,
         min(test_date) AS first_date, max(test_date) AS last_date
  FROM rs
)
SELECT
  json_build_object(
    'campaign', (SELECT json_build_object('id', ca.id, 'code', ca.code, 'name', ca.name, 'kind', ca.kind, 'status', ca.status,
                   'plannedRuns', ca.planned_runs, 'startDate', ca.start_date, 'endDate', ca.end_date,
                   'tolerances', ca.tolerances, 'facilityName', f.name)
                 FROM campaigns ca LEFT JOIN facilities f ON f.id = ca.facility_id WHERE ca.id = :campaignId),
    'counts', (SELECT row_to_json(counts) FROM counts),
    'tareRuns', (SELECT count(*) FROM runs WHERE campaign_id = :campaignId AND is_tare),
    'runsWithDeltas', (SELECT count(DISTINCT run_id) FROM raw),
    'points', (SELECT count(*) FROM points pt JOIN reductions rd ON rd.id = pt.reduction_id AND rd.is_current
               WHERE rd.run_id IN (SELECT id FROM rs) AND NOT pt.excluded),
    'configurations', (SELECT COALESCE(json_agg(json_build_object('name', cf.name, 'ids', cf.ids, 'versions', cf.versions,
                          'runs', COALESCE(cr.runs, 0), 'runsWithDeltas', COALESCE(cr.runs_with_deltas, 0)) ORDER BY cf.name), '[]'::json)
                       FROM configs cf LEFT JOIN config_runs cr ON cr.name = cf.name),
    'cells', (SELECT COALESCE(json_agg(cells), '[]'::json) FROM cells),
    'worst', (SELECT COALESCE(json_agg(json_build_object('deltaId', id, 'runId', run_id, 'runNumber', run_number, 'seq', seq,
                 'testDate', test_date, 'configurationName', configuration_name, 'configurationVersion', configuration_version,
                 'quantity', quantity, 'value', value, 'uncertainty', uncertainty, 'tolerance', tolerance, 'unit', unit, 'ratio', ratio)
                 ORDER BY ratio DESC NULLS LAST, seq), '[]'::json) FROM worst),
    'pooled', (SELECT COALESCE(json_agg(pooled), '[]'::json) FROM pooled)
  )::text AS facts,
  json_build_object(
    'runs', (SELECT json_build_object('id', COALESCE(array_agg(id ORDER BY seq), '{}'), 'runNumber', COALESCE(array_agg(run_number ORDER BY seq), '{}'),
               'seq', COALESCE(array_agg(seq ORDER BY seq), '{}'), 'testDate', COALESCE(array_agg(test_date ORDER BY seq), '{}'),
               'state', COALESCE(array_agg(state ORDER BY seq), '{}'), 'repeatOf', COALESCE(array_agg(repeat_of_run_id ORDER BY seq), '{}')) FROM rs),
    'stateCodes', json_build_array(${STATE_CODES.map((s) => `'${s}'`).join(', ')}),
    'series', (SELECT COALESCE(json_agg(s ORDER BY s."configurationName", s.quantity), '[]'::json) FROM (
                 SELECT configuration_name AS "configurationName", quantity,
                        array_agg(run_id ORDER BY seq) AS "runId", array_agg(round(value::numeric, 6)::float8 ORDER BY seq) AS value,
                        array_agg(round(uncertainty::numeric, 6)::float8 ORDER BY seq) AS uncertainty,
                        array_agg(${STATE_CODE_SQL} ORDER BY seq) AS state
                 FROM dl GROUP BY configuration_name, quantity) s),
    'repeatGroups', (SELECT COALESCE(json_agg(json_build_object('configurationName', configuration_name, 'quantity', quantity,
                 'groupRunId', group_run_id, 'n', n, 'mean', mean, 'stddev', stddev, 'range', range, 'runId', run_ids, 'value', vals)
                 ORDER BY configuration_name, quantity, group_run_id), '[]'::json) FROM groups)
  )::text AS bulk
`;

/**
 * What the summary depends on, cheaply: the campaign row, its runs (count,
 * last change, newest id), the newest reduction and prediction of its runs
 * (every delta is written with a new prediction) and its configurations.
 * A summary snapshot with the same fingerprint is still exact.
 */
const FINGERPRINT_SQL = `concat_ws(':',
  (SELECT extract(epoch FROM updated_at)::text FROM campaigns WHERE id = :campaignId),
  (SELECT count(*) || '/' || COALESCE(max(id), 0) || '/' || COALESCE(extract(epoch FROM max(updated_at)), 0) FROM runs WHERE campaign_id = :campaignId),
  (SELECT COALESCE(max(rd.id), 0) FROM reductions rd JOIN runs r ON r.id = rd.run_id WHERE r.campaign_id = :campaignId),
  (SELECT COALESCE(max(p.id), 0) FROM predictions p JOIN runs r ON r.id = p.run_id WHERE r.campaign_id = :campaignId),
  (SELECT count(*) || '/' || COALESCE(max(id), 0) || '/' || COALESCE(extract(epoch FROM max(updated_at)), 0) FROM configurations WHERE campaign_id = :campaignId)
)`;

/** The current fingerprint and the stored body when it was computed from the same data (else body is null). Replacements: `campaignId`. */
export const SNAPSHOT_SQL = `
WITH fp AS (SELECT ${FINGERPRINT_SQL} AS fingerprint)
SELECT fp.fingerprint, s.body FROM fp LEFT JOIN summary_snapshots s ON s.campaign_id = :campaignId AND s.fingerprint = fp.fingerprint`;

/**
 * As SNAPSHOT_SQL, but the body is left out when the fingerprint equals
 * `:known` (the one this process already holds): an 800 KB body need not
 * cross the connection again. Replacements: `campaignId`, `known`.
 */
export const SNAPSHOT_IF_CHANGED_SQL = `
WITH fp AS (SELECT ${FINGERPRINT_SQL} AS fingerprint)
SELECT fp.fingerprint, (fp.fingerprint = :known) AS same, CASE WHEN fp.fingerprint = :known THEN NULL ELSE s.body END AS body
  FROM fp LEFT JOIN summary_snapshots s ON s.campaign_id = :campaignId AND s.fingerprint = fp.fingerprint`;

/** Store a computed body. Replacements: `campaignId`, `fingerprint`, `body`. */
export const STORE_SNAPSHOT_SQL = `
INSERT INTO summary_snapshots (campaign_id, fingerprint, body, computed_at) VALUES (:campaignId, :fingerprint, :body, now())
ON CONFLICT (campaign_id) DO UPDATE SET fingerprint = EXCLUDED.fingerprint, body = EXCLUDED.body, computed_at = EXCLUDED.computed_at`;
