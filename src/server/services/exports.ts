/**
 * Exports of a finished measurement: the versioned summary record (field names
 * aligned with the 4DN-BINA-OME "NBO" OpticalCalibration element where one exists)
 * and the averaged PSF as a 32-bit float OME-TIFF. Both are read from the summary
 * stored on the row by the worker (`analysis-runs.ts` → `buildSummary`); nothing is
 * recomputed here.
 */
import { eq } from "drizzle-orm";
import { writeOmeTiff } from "../../lib/tiff";
import type { Db } from "../db/client";
import { objectives, type Measurement } from "../db/schema";
import type { Actor } from "../auth/permissions";
import { AppError } from "../http/errors";
import type { buildSummary } from "./analysis-runs";
import { getMeasurementRow, type StoredParameters } from "./measurements";

/** Identifier of the summary record's schema; bump the number on an incompatible change. */
export const SUMMARY_SCHEMA = "beadbench.summary/1";

type StoredSummary = ReturnType<typeof buildSummary>;
/** The averaged PSF as stored (JSON round-trip of `buildSummary`'s output). */
type StoredAveragedPsf = NonNullable<StoredSummary["averagedPsf"]>;

const um = (nm: number | null | undefined) => (nm == null ? null : nm / 1000);
const finite = (xs: Array<number | null | undefined>) =>
  xs.filter((x): x is number => typeof x === "number" && Number.isFinite(x));
const minOf = (...xs: Array<number | null | undefined>) =>
  finite(xs).length ? Math.min(...finite(xs)) : null;
const maxOf = (...xs: Array<number | null | undefined>) =>
  finite(xs).length ? Math.max(...finite(xs)) : null;

async function finishedRow(
  db: Db,
  actor: Actor,
  id: string,
): Promise<{ row: Measurement; summary: StoredSummary }> {
  const row = await getMeasurementRow(db, actor, id);
  if (row.status !== "done" || !row.summary)
    throw new AppError(
      "conflict",
      `The measurement is ${row.status}: exports exist only for a finished measurement.`,
    );
  return { row, summary: row.summary as StoredSummary };
}

/**
 * The summary record of a finished measurement (`schema: "beadbench.summary/1"`).
 *
 * Field names under `OpticalCalibration` follow the NBO "Calibration and Performance" extension's
 * OpticalCalibration element as listed in QC-PRACTICE.md §1.4 and §5.1/§5.3 (our only source for
 * them). Confirmed there by name: TheoreticalXYSpotSize_FWHM, MedianXYSpotSize_FWHM, SampleSize,
 * PSFEquation, NyquistRate, Planarity, LateralAsymmetry, AxialAsymmetry. NOT confirmed by name
 * (QC-PRACTICE.md only says NBO has "the theoretical and the median, min and max measured lateral and
 * axial FWHM"; these follow the same pattern and must be checked against the NBO XSD before an XML
 * mapping relies on them): TheoreticalZSpotSize_FWHM, MedianZSpotSize_FWHM, MinXYSpotSize_FWHM,
 * MaxXYSpotSize_FWHM, MinZSpotSize_FWHM, MaxZSpotSize_FWHM. The NBO definitions and units of
 * NyquistRate, Planarity and AxialAsymmetry are not given in our sources either, so `units` and
 * `definitions` state ours.
 */
export async function getMeasurementSummaryExport(db: Db, actor: Actor, id: string) {
  const { row, summary: s } = await finishedRow(db, actor, id);
  const params = row.parameters as StoredParameters;
  const [objective] = await db
    .select({ id: objectives.id, name: objectives.name, serialNumber: objectives.serialNumber })
    .from(objectives)
    .where(eq(objectives.id, row.objectiveId))
    .limit(1);
  const w = s.widths;
  const formula = `${s.theory.formulaId}@${s.theory.formulaVersion}`;
  const ri = s.effectiveRi as
    | {
        sampleRi: number;
        interval95: [number, number];
        consistentWithDeclared: boolean | null;
        message: string;
      }
    | { sampleRi: null; reason: string };
  const planarity = s.field?.plane?.planarityPeakToValleyUm ?? null;
  return {
    schema: SUMMARY_SCHEMA,
    measurementId: row.id,
    version: row.version,
    OpticalCalibration: {
      TheoreticalXYSpotSize_FWHM: um(s.theory.lateralNm),
      TheoreticalZSpotSize_FWHM: um(s.theory.axialNm),
      MedianXYSpotSize_FWHM: s.headline.lateralFwhmUm,
      MinXYSpotSize_FWHM: minOf(w.fwhmX.minUm, w.fwhmY.minUm),
      MaxXYSpotSize_FWHM: maxOf(w.fwhmX.maxUm, w.fwhmY.maxUm),
      MedianZSpotSize_FWHM: s.headline.axialFwhmUm,
      MinZSpotSize_FWHM: w.fwhmZ.minUm,
      MaxZSpotSize_FWHM: w.fwhmZ.maxUm,
      SampleSize: s.beads.used,
      PSFEquation: formula,
      NyquistRate: maxOf(s.sampling.lateral.nyquistRatio, s.sampling.axial.nyquistRatio),
      Planarity: planarity,
      LateralAsymmetry: w.medianLateralAsymmetry,
      AxialAsymmetry: w.medianAxialAsymmetry,
    },
    units: {
      "*SpotSize_FWHM": "µm",
      SampleSize: "beads",
      NyquistRate: "ratio",
      Planarity: "µm",
      LateralAsymmetry: "ratio",
      AxialAsymmetry: "ratio",
    },
    definitions: {
      MedianXYSpotSize_FWHM:
        "median over x and y of the per-bead medians of 1D Gaussian + offset fits through each bead's centre, bead-size corrected by quadrature where reliable",
      "Min*/Max*SpotSize_FWHM":
        "smallest and largest per-bead fitted width of the included beads, not bead-size corrected",
      NyquistRate:
        "voxel size / Nyquist interval, the worse of the lateral and axial axes (≤ 1 is at or finer than Nyquist)",
      Planarity:
        "peak-to-valley of the best-focus plane fitted to the beads nearest the coverslip, over the field",
      LateralAsymmetry: "median over the beads of min(FWHM x, FWHM y) / max(FWHM x, FWHM y)",
      AxialAsymmetry:
        "median over the beads of (largest side lobe on the far side of focus − largest side lobe on the near side) / peak, within ±4 axial FWHM",
    },
    engineVersion: row.engineVersion ?? s.engineVersion,
    formula: row.formulaId ?? formula,
    objective: {
      id: row.objectiveId,
      name: objective?.name ?? params.objectiveName,
      serialNumber: objective?.serialNumber ?? null,
    },
    purpose: row.purpose,
    acquisitionDate: row.acquiredAt.toISOString(),
    finishedAt: row.finishedAt?.toISOString() ?? null,
    optics: {
      modality: params.modality,
      na: params.na,
      immersionRi: params.immersionRi,
      emissionWavelengthNm: params.emissionWavelengthNm,
      excitationWavelengthNm: params.excitationWavelengthNm ?? null,
      pinholeAu: params.pinholeAu ?? null,
      beadDiameterNm: params.beadDiameterNm,
    },
    voxelSizeUm: s.voxelSizeUm,
    declaredSampleRi: s.sampleRi,
    mediumName: s.mediumName,
    effectiveSampleRi:
      ri.sampleRi != null
        ? {
            value: ri.sampleRi,
            interval95: ri.interval95,
            consistentWithDeclared: ri.consistentWithDeclared,
            message: ri.message,
          }
        : { value: null, reason: ri.reason },
    beads: { found: s.beads.found, used: s.beads.used, rejected: s.beads.rejected },
    ratios: s.ratios,
    verdict: { level: s.verdict.level, headline: s.verdict.headline, evidence: s.verdict.evidence },
  };
}

/**
 * The averaged PSF of a finished measurement as a 32-bit float OME-TIFF (µm voxel sizes in the
 * OME-XML), with a file name for the download.
 */
export async function getAveragedPsfOmeTiff(
  db: Db,
  actor: Actor,
  id: string,
): Promise<{ bytes: Uint8Array; fileName: string }> {
  const { row, summary } = await finishedRow(db, actor, id);
  const psf = summary.averagedPsf as StoredAveragedPsf | null;
  if (!psf) throw new AppError("not_found", "This measurement has no averaged PSF: no bead was usable.");
  const raw = Buffer.from(psf.dataBase64, "base64");
  // Copy into an aligned buffer of its own (a Buffer may sit at any offset of a shared pool).
  const data = new Float32Array(raw.byteLength / 4);
  new Uint8Array(data.buffer).set(raw);
  const params = row.parameters as StoredParameters;
  const fileName = `averaged-psf-${row.id}.ome.tif`;
  const bytes = writeOmeTiff(
    { data, shape: psf.shape, voxelSizeUm: psf.voxelSizeUm },
    {
      imageName: `Averaged PSF of ${psf.beadCount} beads`,
      description: `Averaged PSF (background-subtracted, amplitude-normalised mean of ${psf.beadCount} registered beads) of measurement ${row.id} v${row.version}; ${row.engineVersion ?? summary.engineVersion}.`,
      emissionWavelengthNm: params.emissionWavelengthNm,
      acquisitionDate: row.acquiredAt.toISOString(),
      uuid: `urn:uuid:${row.id}`,
      fileName,
    },
  );
  return { bytes, fileName };
}
