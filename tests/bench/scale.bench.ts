/**
 * Scale benchmark (issue 8, quality gate 6): with 10 000 measurements and 1 000 000 bead rows in
 * the database, the logbook and dashboard queries stay at p95 ≤ 200 ms.
 *
 * Needs a PostgreSQL server: DATABASE_URL names any database on it; the benchmark creates its own
 * database beside it (`beadbench_scale_<pid>`), migrates it, seeds the demo facility's minimal
 * rows (people, instruments, objectives — no demo history), then bulk-loads invented load data
 * with set-based SQL:
 *  - 10 000 measurements over the six objectives and ~24 months (mostly done; routine checks,
 *    researchers' samples, baselines, pre-/post-service checks, some failed or cancelled, a few
 *    queued or running, ~1 % re-run versions), one stack row each (re-runs share their parent's);
 *  - summaries shaped like the worker's (ratios, headline, widths, theory, verdict, beads, and an
 *    averaged-PSF blob of 60–90 kB like the real ones), with widths around each objective's
 *    theoretical FWHM (src/lib/optics theoreticalFwhm) times a per-objective drift, plus noise;
 *  - 1 000 000 bead rows (≈ 106 per finished measurement) with per-bead noise;
 *  - ~1 600 logbook events (cleaning, immersion changes, notes, service…; a baseline event
 *    before each baseline check).
 * Then it times the real service and query functions the pages and API call (explicit Actor, as
 * the pages pass it), sequentially, after warm-up, and reports p50 / p95 / max per operation;
 * then EXPLAIN (ANALYZE, BUFFERS) of every SQL statement the slowest operations issue, with the
 * scans they use. The database is dropped at the end, also on failure or Ctrl-C.
 *
 * Everything loaded is invented load data, not demo data.
 *
 * Run alone: `DATABASE_URL=postgres://postgres@127.0.0.1:54329/postgres npx tsx tests/bench/scale.bench.ts`
 * (SCALE_REPS=… repetitions per operation, default 100; SCALE_BUDGET_S=… time cap per operation,
 * default 20 s).
 */
import path from "node:path";
import { fileURLToPath } from "node:url";
import { drizzle } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import { Client, Pool } from "pg";
import { theoreticalFwhm, type Modality } from "../../src/lib/optics";
import type { Actor } from "../../src/server/auth/permissions";
import type { Db } from "../../src/server/db/client";
import * as schema from "../../src/server/db/schema";
import { listEventsByObjective } from "../../src/server/db/queries/logbook";
import { countMeasurements, listMeasurementPage } from "../../src/server/db/queries/measurements";
import { beadsToCsv, beadsToPublicRows } from "../../src/server/services/bead-export";
import { getDashboard } from "../../src/server/services/dashboard";
import { seedDemoData } from "../../src/server/services/demo-data";
import { getObjectiveTrend } from "../../src/server/services/logbook";
import { getMeasurement, listBeads } from "../../src/server/services/measurements";
import {
  getObjectiveOverview,
  OBJECTIVE_MEASUREMENTS_PAGE,
} from "../../src/server/services/objective-overview";
import { getStatusOnDate } from "../../src/server/services/status-on-date";

interface Row {
  name: string;
  value: number;
  unit: string;
  target?: string;
}

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
const MEASUREMENTS = 10_000;
const BEADS = 1_000_000;
const MONTHS = 24;
const REPS = Number(process.env.SCALE_REPS ?? 100);
const BUDGET_MS = Number(process.env.SCALE_BUDGET_S ?? 20) * 1000;
const WARMUP = 3;
const TARGET_MS = 200;

const byValue = (a: number, b: number) => a - b;
function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

/** Per-objective story of the load data: ratio baselines and drift over the 24 months. */
const DRIFT = [
  { lat: 1.1, ax: 1.15, dLat: 0.0, dAx: 0.02 },
  { lat: 1.08, ax: 1.13, dLat: 0.01, dAx: 0.03 },
  { lat: 1.12, ax: 1.2, dLat: 0.02, dAx: 0.06 },
  { lat: 1.06, ax: 1.12, dLat: 0.0, dAx: 0.0 },
  { lat: 1.09, ax: 1.14, dLat: 0.05, dAx: 0.15 },
  { lat: 1.1, ax: 1.18, dLat: 0.12, dAx: 0.45 },
];

interface Loaded {
  facilityId: string;
  actors: { staff: Actor; researcher: Actor };
  objectiveId: string;
  measurementId: string;
  counts: Record<string, number>;
}

/** Seed the demo facility's minimal rows, then bulk-load the invented measurements, beads and events. */
async function load(db: Db, pool: Pool, rows: Row[]): Promise<Loaded> {
  const pw = `scale-${process.pid}-${Date.now()}`;
  const seeded = await seedDemoData(db, { admin: pw, staff: pw, researcher: pw, engineer: pw });
  const { facilityId, userIds } = seeded;
  const c = await pool.connect();
  try {
    await c.query("set synchronous_commit = off");
    await c.query("select setseed(0.42)");
    const objs = await c.query<{
      id: string;
      na: number;
      ri: number;
      name: string;
      modality: Modality;
      immersion: string;
    }>(
      `select o.id, o.na, o.design_immersion_ri as ri, o.name, i.modality, o.immersion
         from objectives o join instruments i on i.id = o.instrument_id
        where o.facility_id = $1 order by o.magnification, o.name`,
      [facilityId],
    );
    const t0 = performance.now();
    await c.query(`create temp table bench_obj (
      idx int, id uuid, name text, modality modality, na float8, ri float8, immersion text,
      lat_um float8, ax_um float8, formula_id text, base_lat float8, base_ax float8, d_lat float8, d_ax float8)`);
    for (const [idx, o] of objs.rows.entries()) {
      const theory = theoreticalFwhm({
        modality: o.modality,
        na: o.na,
        immersionRi: o.ri,
        emissionWavelengthNm: 520,
        excitationWavelengthNm: 488,
        pinholeAu: 1,
      });
      const d = DRIFT[idx % DRIFT.length]!;
      await c.query(`insert into bench_obj values ($1,$2,$3,$4,$5,$6,$7,$8,$9,$10,$11,$12,$13,$14)`, [
        idx,
        o.id,
        o.name,
        o.modality,
        o.na,
        o.ri,
        o.immersion,
        theory.lateralNm / 1000,
        theory.axialNm / 1000,
        theory.formulaId,
        d.lat,
        d.ax,
        d.dLat,
        d.dAx,
      ]);
    }
    const nObj = objs.rows.length;

    // One random draw per measurement; i orders them in time.
    await c.query(
      `create temp table bench_draw as
       select i, gen_random_uuid() as id, gen_random_uuid() as stack_id,
              floor(random() * $2)::int as obj_idx,
              ((i - 1) + random()) / $1::float8 as t_frac,
              random() as r_purpose, random() as r_status, random() as r_user,
              1 - random() as u1, random() as u2, random() as r_snr,
              null::uuid as parent_id, 1 as version
         from generate_series(1, $1) i`,
      [MEASUREMENTS, nObj],
    );
    // ~1 % are re-run versions of the measurement just before them (same stack, objective, time).
    await c.query(
      `update bench_draw b set obj_idx = p.obj_idx, stack_id = p.stack_id, t_frac = p.t_frac,
              r_purpose = greatest(p.r_purpose, 0.4), parent_id = p.id, version = 2
         from bench_draw p where b.i % 97 = 0 and p.i = b.i - 1`,
    );
    await c.query(`update bench_draw p set r_purpose = greatest(r_purpose, 0.4)
                    where exists (select 1 from bench_draw b where b.parent_id = p.id)`);
    await c.query(
      `create temp table bench_m as
       select d.*, o.id as objective_id, o.modality, o.na, o.ri, o.name as objective_name,
              o.lat_um, o.ax_um, o.formula_id,
              now() - make_interval(days => ${MONTHS * 30}) + d.t_frac * make_interval(days => ${MONTHS * 30})
                - interval '3 hours' as acquired_at,
              (case when d.r_purpose < 0.004 then 'baseline' when d.r_purpose < 0.009 then 'pre-service'
                    when d.r_purpose < 0.014 then 'post-service' when d.r_purpose < 0.314 then 'sample'
                    else 'routine' end)::measurement_purpose as purpose,
              (case when d.i > $1 - 6 then (case when d.i % 2 = 0 then 'queued' else 'running' end)
                    when d.r_status < 0.04 then 'failed' when d.r_status < 0.05 then 'cancelled'
                    else 'done' end)::measurement_status as status,
              o.base_lat + o.d_lat * d.t_frac * d.t_frac
                + 0.03 * sqrt(-2 * ln(d.u1)) * cos(2 * pi() * d.u2) as lat_ratio,
              o.base_ax + o.d_ax * d.t_frac * d.t_frac
                + 0.05 * sqrt(-2 * ln(d.u1)) * sin(2 * pi() * d.u2) as ax_ratio,
              0 as done_rank
         from bench_draw d join bench_obj o on o.idx = d.obj_idx`,
      [MEASUREMENTS],
    );
    await c.query(`update bench_m m set done_rank = x.rn
                     from (select id, row_number() over (order by i) as rn from bench_m where status = 'done') x
                    where x.id = m.id`);
    const nDone = Number((await c.query(`select count(*) from bench_m where status = 'done'`)).rows[0].count);
    const perBead = Math.floor(BEADS / nDone);

    // Averaged-PSF blobs: distinct 60–90 kB slices of random base64, as incompressible as the real ones.
    await c.query(`create temp table bench_blob as
      select replace(encode(decode(string_agg(md5(g::text || random()::text), ''), 'hex'), 'base64'), E'\\n', '') as b
        from generate_series(1, 6500) g`);

    const tStacks = performance.now();
    await c.query(
      `insert into stacks (id, facility_id, uploaded_by, file_name, storage_key, sha256, size_bytes,
                           width, height, slices, channels, frames, dtype, voxel_x_um, voxel_y_um, voxel_z_um,
                           sample_type, metadata, metadata_source, created_at, updated_at)
       select stack_id, $1, case when purpose = 'sample' then $2::uuid else $3::uuid end,
              'load-' || i || '.tif', 'load/' || stack_id, md5(stack_id::text) || md5(i::text),
              48 * 128 * 128 * 2, 128, 128, 48, 1, 1, 'uint16', 0.065, 0.065, 0.15, 'bead-slide',
              '{"format": "imagej", "warnings": []}'::jsonb, 'file',
              acquired_at + interval '5 minutes', acquired_at + interval '5 minutes'
         from bench_m where parent_id is null`,
      [facilityId, userIds.researcher, userIds.staff],
    );
    const tMeas = performance.now();
    await c.query(
      `insert into measurements (id, facility_id, stack_id, objective_id, created_by, purpose, status, stage,
                                 fraction, error_code, error_message, channel, modality, parameters, version,
                                 parent_id, summary, engine_version, formula_id, acquired_at, started_at,
                                 finished_at, created_at, updated_at)
       select m.id, $1, m.stack_id, m.objective_id,
              case when m.purpose = 'sample' then (case when m.r_user < 0.85 then $2::uuid else $3::uuid end)
                   else (case when m.r_user < 0.7 then $3::uuid else $4::uuid end) end,
              m.purpose, m.status,
              case m.status when 'done' then 'done' when 'failed' then 'failed' when 'cancelled' then 'cancelled'
                            when 'running' then 'fitting' else 'queued' end,
              case m.status when 'done' then 1 when 'running' then 0.4 else 0 end,
              case when m.status = 'failed' then 'too_few_beads' end,
              case when m.status = 'failed' then 'No bead passed the quality checks (load data).' end,
              0, m.modality,
              jsonb_build_object('channel', 0, 'modality', m.modality, 'na', m.na, 'immersionRi', m.ri,
                'sampleRi', m.ri, 'emissionWavelengthNm', 520, 'excitationWavelengthNm', 488, 'pinholeAu', 1,
                'beadDiameterNm', 100, 'designCoverslipUm', 170, 'thresholdK', 6, 'mediumId', null,
                'mediumName', 'matched to the immersion medium', 'temperatureC', null,
                'objectiveName', m.objective_name, 'limits', '{"lateral": 1.5, "axial": 1.5}'::jsonb),
              m.version, m.parent_id,
              case when m.status = 'done' then jsonb_build_object(
                'ratios', jsonb_build_object('lateral', m.lat_ratio, 'axial', m.ax_ratio),
                'headline', jsonb_build_object('basis', 'median of 1D Gaussian + offset fits through each bead''s centre',
                  'lateralFwhmUm', m.lat_ratio * m.lat_um, 'axialFwhmUm', m.ax_ratio * m.ax_um),
                'theory', jsonb_build_object('formulaId', m.formula_id, 'formulaVersion', '1.0.0',
                  'lateralNm', m.lat_um * 1000, 'axialNm', m.ax_um * 1000, 'notes', '["Load data (invented)."]'::jsonb),
                'verdict', jsonb_build_object(
                  'level', case when m.lat_ratio >= 1.5 or m.ax_ratio >= 1.5 then 'fail'
                                when m.lat_ratio < 0.8 or m.ax_ratio < 0.8 then 'check' else 'pass' end,
                  'headline', 'Load data (invented).', 'evidence', jsonb_build_array($5::int || ' beads used.')),
                'beads', jsonb_build_object('found', $5::int, 'used', $5::int - 8, 'rejected', 8,
                  'rejectedByReason', '{"low_snr": 4, "neighbour": 3, "poor_fit": 1}'::jsonb),
                'widths', jsonb_build_object('found', $5::int, 'used', $5::int - 8, 'rejected', 8,
                  'medianSnr', 60 + 200 * m.r_snr, 'medianAxialAsymmetry', 0.02 * (m.u2 - 0.5),
                  'medianLateralAsymmetry', 0.98 + 0.02 * m.u2,
                  'fwhmX', jsonb_build_object('count', $5::int - 8, 'medianUm', m.lat_ratio * m.lat_um * 1.02,
                    'medianCorrectedUm', m.lat_ratio * m.lat_um, 'iqrUm', 0.01 * m.lat_um),
                  'fwhmY', jsonb_build_object('count', $5::int - 8, 'medianUm', m.lat_ratio * m.lat_um * 1.02,
                    'medianCorrectedUm', m.lat_ratio * m.lat_um, 'iqrUm', 0.01 * m.lat_um),
                  'fwhmZ', jsonb_build_object('count', $5::int - 8, 'medianUm', m.ax_ratio * m.ax_um * 1.005,
                    'medianCorrectedUm', m.ax_ratio * m.ax_um, 'iqrUm', 0.02 * m.ax_um)),
                'effectiveRi', jsonb_build_object('sampleRi', m.ri),
                'sampleRi', m.ri, 'mediumName', 'matched to the immersion medium',
                'engineVersion', 'psf-engine/1.0.0',
                'voxelSizeUm', '{"x": 0.065, "y": 0.065, "z": 0.15}'::jsonb,
                'averagedPsf', jsonb_build_object('shape', '[33, 23, 23]'::jsonb, 'beadCount', $5::int - 8,
                  'fwhmXUm', m.lat_ratio * m.lat_um, 'fwhmYUm', m.lat_ratio * m.lat_um, 'fwhmZUm', m.ax_ratio * m.ax_um,
                  'voxelSizeUm', '{"x": 0.065, "y": 0.065, "z": 0.15}'::jsonb,
                  'dataBase64', substr(bl.b, 1 + (m.i * 7919) % 40000, 60000 + (m.i * 31) % 30000)),
                'prediction', (select jsonb_agg(jsonb_build_object('depthUm', k * 0.5,
                  'lateralFwhmUm', m.lat_um, 'axialFwhmUm', m.ax_um * (1 + 0.002 * k), 'peakRelative', 1 - 0.001 * k,
                  'focalShiftFactor', 1)) from generate_series(0, 11) k))
              end,
              case when m.status = 'done' then 'psf-engine/1.0.0' end,
              case when m.status = 'done' then m.formula_id || '@1.0.0' end,
              m.acquired_at,
              case when m.status <> 'queued' then m.acquired_at + interval '6 minutes' end,
              case when m.status in ('done', 'failed', 'cancelled') then m.acquired_at + interval '8 minutes' end,
              m.acquired_at + interval '5 minutes', m.acquired_at + interval '8 minutes'
         from bench_m m cross join bench_blob bl order by m.i`,
      [facilityId, userIds.researcher, userIds.staff, userIds.admin, perBead],
    );
    const tBeads = performance.now();
    // Exactly BEADS rows: bead g goes to finished measurement (g mod nDone), so ≈ BEADS / nDone each.
    await c.query(
      `insert into bead_results (measurement_id, bead_index, x_px, y_px, z_px, depth_um, apparent_depth_um,
                                 fwhm_x_um, fwhm_y_um, fwhm_z_um, fwhm_z_direct_um, fwhm3d_x_um, fwhm3d_y_um,
                                 fwhm3d_z_um, amplitude, background, snr, r2, axial_asymmetry, included,
                                 user_included, reject_reason, extra, created_at, updated_at)
       select m.id, (b.g - 1) / $2 + 1, b.x, b.y, b.z, greatest(0, (b.z - 16) * 0.15), greatest(0, (b.z - 16) * 0.15),
              m.lat_ratio * m.lat_um * (1 + 0.04 * b.n1), m.lat_ratio * m.lat_um * (1 + 0.04 * b.n2),
              m.ax_ratio * m.ax_um * (1 + 0.05 * b.n3), m.ax_ratio * m.ax_um * (1.03 + 0.05 * b.n3),
              m.lat_ratio * m.lat_um * (0.97 + 0.04 * b.n1), m.lat_ratio * m.lat_um * (0.97 + 0.04 * b.n2),
              m.ax_ratio * m.ax_um * (1.01 + 0.05 * b.n3),
              2000 + 1500 * b.r, 100 + 20 * b.u, b.snr, 0.9 + 0.099 * b.u, 0.05 * b.n2,
              b.reason is null, null, b.reason,
              jsonb_build_object('xUm', b.x * 0.065, 'yUm', b.y * 0.065, 'zUm', b.z * 0.15,
                'r2', jsonb_build_object('x', 0.99 + 0.009 * b.u, 'y', 0.99 + 0.009 * b.r, 'z', 0.98 + 0.019 * b.u),
                'uncertaintyUm', jsonb_build_object('x', 0.003 * (1 + b.u), 'y', 0.003 * (1 + b.r), 'z', 0.014 * (1 + b.u)),
                'peak', round(2000 + 1500 * b.r), 'integrated', 300000 * (1 + 0.1 * b.n1),
                'rejectReasons', case when b.reason is null then '[]'::jsonb else jsonb_build_array(b.reason) end),
              m.acquired_at + interval '8 minutes', m.acquired_at + interval '8 minutes'
         from (select g, 128 * random() as x, 128 * random() as y, 10 + 30 * random() as z,
                      random() as r, random() as u, 20 + 300 * random() as snr,
                      sqrt(-2 * ln(1 - random())) * cos(2 * pi() * random()) as n1,
                      sqrt(-2 * ln(1 - random())) * cos(2 * pi() * random()) as n2,
                      sqrt(-2 * ln(1 - random())) * cos(2 * pi() * random()) as n3,
                      case when random() < 0.08 then (array['low_snr', 'neighbour', 'poor_fit', 'edge', 'saturated'])[1 + floor(random() * 5)::int] end as reason
                 from generate_series(1, $1) g) b
         join bench_m m on m.done_rank = (b.g - 1) % $2 + 1`,
      [BEADS, nDone],
    );
    const tEvents = performance.now();
    // Logbook: a baseline event just before each baseline check, and ~1 500 other events.
    await c.query(
      `insert into logbook_events (facility_id, objective_id, kind, note, occurred_at, created_by)
       select $1::uuid, objective_id, 'baseline_start'::logbook_event_kind, 'Baseline of a new epoch (load data).',
              acquired_at - interval '1 second', $2::uuid
         from bench_m where purpose = 'baseline'
       union all
       select $1::uuid, o.id, k.kind::logbook_event_kind, 'Load data (invented): ' || k.kind,
              now() - make_interval(days => ${MONTHS * 30}) + random() * make_interval(days => ${MONTHS * 30}),
              case when random() < 0.5 then $2::uuid else $3::uuid end
         from generate_series(1, 1500) g
         join bench_obj o on o.idx = g % $4
         cross join lateral (select case when r < 0.45 then 'cleaned' when r < 0.57 then 'immersion_changed'
                                         when r < 0.72 then 'note' when r < 0.87 then 'checklist_step'
                                         when r < 0.94 then 'collar_set' when r < 0.96 then 'new_bead_slide'
                                         when r < 0.98 then 'service' when r < 0.99 then 'repaired'
                                         else 'dropped' end as kind
                               from (select random() + g * 0 as r) x) k`,
      [facilityId, userIds.staff, userIds.admin, nObj],
    );
    const tVacuum = performance.now();
    await c.query("vacuum (analyze) stacks, measurements, bead_results, logbook_events");
    const tEnd = performance.now();

    const counts: Record<string, number> = {};
    for (const t of ["stacks", "measurements", "bead_results", "logbook_events"]) {
      counts[t] = Number((await c.query(`select count(*) from ${t}`)).rows[0].count);
    }
    const sizes = await c.query<{ t: string; mb: string }>(
      `select t, round(pg_total_relation_size(t::regclass) / 1e6)::text as mb
         from unnest(array['measurements', 'bead_results']) t`,
    );
    const mix = await c.query<{ k: string; n: string }>(
      `select purpose || '/' || status as k, count(*)::text as n from measurements group by 1 order by 2 desc`,
    );
    console.log(
      `scale.bench: loaded ${counts.measurements} measurements (${mix.rows.map((r) => `${r.k} ${r.n}`).join(", ")}), ` +
        `${counts.bead_results} beads, ${counts.logbook_events} events; ` +
        sizes.rows.map((r) => `${r.t} ${r.mb} MB`).join(", "),
    );
    rows.push(
      { name: "load: measurements", value: counts.measurements!, unit: "rows", target: "10 000" },
      { name: "load: bead rows", value: counts.bead_results!, unit: "rows", target: "1 000 000" },
      { name: "load: logbook events", value: counts.logbook_events!, unit: "rows" },
      { name: "load: stacks + measurements insert", value: (tBeads - tStacks) / 1000, unit: "s" },
      { name: "load: bead rows insert", value: (tEvents - tBeads) / 1000, unit: "s" },
      { name: "load: vacuum analyze", value: (tEnd - tVacuum) / 1000, unit: "s" },
      { name: "load: total (after seed)", value: (tEnd - t0) / 1000, unit: "s", target: "< 120 s" },
    );
    void tMeas;

    // The objective with the most checks, and a finished check in the middle of the series.
    const obj = await c.query<{ id: string }>(
      `select objective_id as id from measurements where purpose <> 'sample' and status = 'done'
        group by objective_id order by count(*) desc limit 1`,
    );
    const mid = await c.query<{ id: string }>(
      `select id from measurements where objective_id = $1 and status = 'done' and purpose = 'routine'
        order by acquired_at offset 500 limit 1`,
      [obj.rows[0]!.id],
    );
    return {
      facilityId,
      actors: {
        staff: { userId: userIds.staff, facilityId, role: "staff", via: "session" },
        researcher: { userId: userIds.researcher, facilityId, role: "researcher", via: "session" },
      },
      objectiveId: obj.rows[0]!.id,
      measurementId: mid.rows[0]!.id,
      counts,
    };
  } finally {
    c.release();
  }
}

interface Timing {
  name: string;
  ms: number[];
  fn: () => Promise<unknown>;
}

/** Warm up, then call `fn` REPS times (or until the time budget is spent, at least 5 times). */
async function time(name: string, fn: () => Promise<unknown>): Promise<Timing> {
  for (let i = 0; i < WARMUP; i++) await fn();
  const ms: number[] = [];
  const start = performance.now();
  while (ms.length < REPS && (ms.length < 5 || performance.now() - start < BUDGET_MS)) {
    const t = performance.now();
    await fn();
    ms.push(performance.now() - t);
  }
  ms.sort(byValue);
  console.log(
    `scale.bench: ${name.padEnd(40)} n=${String(ms.length).padStart(3)}  p50 ${percentile(ms, 50).toFixed(1)} ms` +
      `  p95 ${percentile(ms, 95).toFixed(1)} ms  max ${ms[ms.length - 1]!.toFixed(1)} ms`,
  );
  return { name, ms, fn };
}

interface PlanNode {
  "Node Type": string;
  "Relation Name"?: string;
  "Index Name"?: string;
  "Actual Rows"?: number;
  "Actual Loops"?: number;
  Plans?: PlanNode[];
}

interface Scan {
  node: string;
  relation: string;
  index?: string;
  rows: number;
}

function scans(node: PlanNode, out: Scan[] = []): Scan[] {
  if (node["Relation Name"]) {
    out.push({
      node: node["Node Type"],
      relation: node["Relation Name"],
      index: node["Index Name"],
      rows: (node["Actual Rows"] ?? 0) * (node["Actual Loops"] ?? 1),
    });
  }
  for (const p of node.Plans ?? []) scans(p, out);
  return out;
}

/**
 * EXPLAIN (ANALYZE, BUFFERS) every SELECT one call of `t.fn` issues (captured from Drizzle's
 * logger, run again with the same parameters) and print the scans each uses. Returns how many
 * sequential scans of a large table keep under 10 % of its rows — a selective read without a
 * usable index. (Reading most of a table, as the dashboard does for every check, is a seq scan
 * by right.) EXPLAIN ANALYZE neither detoasts nor sends the result, so its times leave out the
 * large jsonb values that the timings above include.
 */
async function explain(
  t: Timing,
  pool: Pool,
  captured: { on: boolean; queries: Array<{ sql: string; params: unknown[] }> },
  tableRows: Record<string, number>,
) {
  captured.queries = [];
  captured.on = true;
  try {
    await t.fn();
  } finally {
    captured.on = false;
  }
  let selectiveSeq = 0;
  console.log(
    `\nscale.bench: EXPLAIN (ANALYZE, BUFFERS) of "${t.name}" (${captured.queries.length} statements)`,
  );
  for (const q of captured.queries) {
    if (!/^\s*select/i.test(q.sql)) continue;
    const res = await pool.query(`explain (analyze, buffers, format json) ${q.sql}`, q.params as unknown[]);
    const plan = (
      res.rows[0]["QUERY PLAN"] as Array<{
        Plan: PlanNode & { "Shared Hit Blocks"?: number; "Shared Read Blocks"?: number };
        "Execution Time": number;
      }>
    )[0]!;
    const list = scans(plan.Plan);
    const notes: string[] = [];
    for (const sc of list) {
      const total = tableRows[sc.relation];
      if (sc.node !== "Seq Scan" || !total || total < 5000) continue;
      const share = sc.rows / total;
      if (share < 0.1) {
        selectiveSeq++;
        notes.push(
          `!! seq scan of ${sc.relation} keeps ${(100 * share).toFixed(1)} % of its rows: no usable index`,
        );
      } else {
        notes.push(`seq scan of ${sc.relation} keeps ${(100 * share).toFixed(0)} % of its rows`);
      }
    }
    const described = list.map((sc) =>
      sc.index ? `${sc.node} ${sc.relation} (${sc.index})` : `${sc.node} ${sc.relation}`,
    );
    console.log(
      `  ${plan["Execution Time"].toFixed(1).padStart(8)} ms  buffers hit ${plan.Plan["Shared Hit Blocks"] ?? 0} read ${plan.Plan["Shared Read Blocks"] ?? 0}` +
        `  ${q.sql.replace(/\s+/g, " ").slice(0, 110)}…\n             ${described.join("; ") || "(no table scans)"}` +
        notes.map((n) => `\n             ${n}`).join(""),
    );
  }
  return selectiveSeq;
}

export async function run(): Promise<Row[]> {
  const baseUrl = process.env.DATABASE_URL;
  if (!baseUrl) {
    console.log(
      "scale.bench: DATABASE_URL is not set; skipped. Give it any database on a PostgreSQL server " +
        "where you may create databases (e.g. postgres://postgres@127.0.0.1:54329/postgres).",
    );
    return [];
  }
  const dbName = `beadbench_scale_${process.pid}`;
  const url = new URL(baseUrl);
  url.pathname = `/${dbName}`;
  const adminUrl = new URL(baseUrl);
  adminUrl.pathname = "/postgres";

  const adminQuery = async (sql: string) => {
    const admin = new Client({ connectionString: adminUrl.toString() });
    await admin.connect();
    try {
      await admin.query(sql);
    } finally {
      await admin.end();
    }
  };
  await adminQuery(`CREATE DATABASE "${dbName}"`);
  const pool = new Pool({ connectionString: url.toString(), max: 10 });
  pool.on("error", () => {});
  let dropped = false;
  const drop = async () => {
    if (dropped) return;
    dropped = true;
    await pool.end().catch(() => {});
    await adminQuery(`DROP DATABASE IF EXISTS "${dbName}" WITH (FORCE)`);
  };
  const onSignal = () => {
    console.log(`\nscale.bench: interrupted; dropping ${dbName}`);
    void drop().finally(() => process.exit(130));
  };
  process.once("SIGINT", onSignal);
  process.once("SIGTERM", onSignal);

  const captured = { on: false, queries: [] as Array<{ sql: string; params: unknown[] }> };
  const db = drizzle(pool, {
    schema,
    logger: {
      logQuery: (sql, params) => {
        if (captured.on) captured.queries.push({ sql, params });
      },
    },
  }) as unknown as Db;
  const rows: Row[] = [];
  try {
    const tm = performance.now();
    await migrate(db, { migrationsFolder: path.join(repoRoot, "drizzle") });
    rows.push({ name: "migrate", value: (performance.now() - tm) / 1000, unit: "s" });
    const L = await load(db, pool, rows);
    const { staff, researcher } = L.actors;
    const now = new Date();
    const yearAgo = new Date(now.getTime() - 365 * 86_400_000).toISOString().slice(0, 10);

    const timings: Timing[] = [];
    timings.push(await time("dashboard (staff)", () => getDashboard(db, staff, now)));
    timings.push(await time("dashboard (researcher)", () => getDashboard(db, researcher, now)));
    timings.push(
      await time("objective page (overview)", async () => {
        const page = await getObjectiveOverview(db, staff, L.objectiveId, now);
        return page.trend.slopePerMonth; // the page shows the rate of change
      }),
    );
    timings.push(
      await time("objective trend (API)", async () =>
        JSON.stringify(await getObjectiveTrend(db, staff, L.objectiveId, now)),
      ),
    );
    timings.push(
      await time("objective events", () => listEventsByObjective(db, { objectiveIds: [L.objectiveId] })),
    );
    const objectiveList = {
      facilityId: L.facilityId,
      objectiveIds: [L.objectiveId],
      limit: OBJECTIVE_MEASUREMENTS_PAGE + 1,
    };
    timings.push(
      await time("objective measurements, first page", () => listMeasurementPage(db, objectiveList)),
    );
    const objectiveDeep = (await listMeasurementPage(db, { ...objectiveList, limit: 1000 })).at(-1)!.cursor;
    timings.push(
      await time("objective measurements, page 21", () =>
        listMeasurementPage(db, { ...objectiveList, before: objectiveDeep }),
      ),
    );
    timings.push(
      await time("facility measurements, first page", () =>
        listMeasurementPage(db, { facilityId: L.facilityId, limit: 50 }),
      ),
    );
    const facilityDeep = (await listMeasurementPage(db, { facilityId: L.facilityId, limit: 9000 })).at(
      -1,
    )!.cursor;
    timings.push(
      await time("facility measurements, page 181", () =>
        listMeasurementPage(db, { facilityId: L.facilityId, limit: 50, before: facilityDeep }),
      ),
    );
    timings.push(
      await time("facility measurements, count", () => countMeasurements(db, { facilityId: L.facilityId })),
    );
    timings.push(
      await time("status on a date (a year ago)", () =>
        getStatusOnDate(db, staff, L.objectiveId, yearAgo, now),
      ),
    );
    timings.push(
      await time("measurement detail (API)", async () =>
        JSON.stringify(await getMeasurement(db, staff, L.measurementId)),
      ),
    );
    timings.push(
      await time("measurement beads, JSON page (API)", async () => {
        const page = await listBeads(db, staff, L.measurementId, { limit: 1000 });
        return JSON.stringify({ beads: beadsToPublicRows(page.beads), next: page.next });
      }),
    );
    timings.push(
      await time("measurement beads, CSV (API)", async () =>
        beadsToCsv(beadsToPublicRows(await listBeads(db, staff, L.measurementId))),
      ),
    );

    for (const t of timings) {
      rows.push(
        { name: `${t.name} p50`, value: percentile(t.ms, 50), unit: "ms" },
        { name: `${t.name} p95`, value: percentile(t.ms, 95), unit: "ms", target: `≤ ${TARGET_MS} ms` },
        { name: `${t.name} max`, value: t.ms[t.ms.length - 1]!, unit: "ms" },
      );
    }
    const slowest = [...timings].sort((a, b) => percentile(b.ms, 95) - percentile(a.ms, 95)).slice(0, 4);
    for (const t of slowest) {
      const seq = await explain(t, pool, captured, L.counts);
      rows.push({
        name: `explain ${t.name}: selective seq scans`,
        value: seq,
        unit: "scans",
        target: "0",
      });
    }
    const over = timings.filter((t) => percentile(t.ms, 95) > TARGET_MS).length;
    rows.push({ name: "operations over the p95 target", value: over, unit: "ops", target: "0" });
    return rows;
  } finally {
    process.removeListener("SIGINT", onSignal);
    process.removeListener("SIGTERM", onSignal);
    await drop();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const rows = await run();
  for (const r of rows)
    console.log(
      `${r.name.padEnd(64)} ${String(+r.value.toFixed(3)).padStart(10)} ${r.unit} ${r.target ? `target ${r.target}` : ""}`,
    );
}
