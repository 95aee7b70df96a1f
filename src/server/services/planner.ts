/**
 * The medium planner: what each lens does with depth in a given medium, before
 * anyone images. The Gibson–Lanni model is scalar widefield at the emission
 * wavelength; for confocal, two-photon and light-sheet the widths are this
 * modality's theoretical FWHM scaled by the model's relative broadening.
 */
import { plannerRows, rankObjectives, theoreticalFwhm, type ObjectiveSpec } from "../../lib/optics";
import type { PlannerObjective, PlannerRequest, PlannerResponse } from "../../contracts/planner";
import type { Db } from "../db/client";
import { requirePermission, type Actor } from "../auth/permissions";
import { getObjective } from "./instruments";
import { resolveMediumRi } from "./media";

export async function runPlanner(db: Db, actor: Actor, req: PlannerRequest): Promise<PlannerResponse> {
  requirePermission(actor, "planner.use");
  const medium = await resolveMediumRi(db, actor, {
    mediumId: req.mediumId,
    sampleRi: req.sampleRi,
    wavelengthNm: req.emissionWavelengthNm,
    temperatureC: req.temperatureC,
  });
  const specs: Array<ObjectiveSpec & { public: PlannerObjective }> = [];
  for (const id of req.objectiveIds ?? []) {
    const o = await getObjective(db, actor, id);
    specs.push({
      id: o.id,
      name: o.name,
      na: o.na,
      immersionRi: o.designImmersionRi,
      coverslipThicknessDesignUm: o.designCoverslipUm,
      public: { id: o.id, name: o.name, na: o.na, immersionRi: o.designImmersionRi },
    });
  }
  (req.objectives ?? []).forEach((o, i) => {
    const name = o.name ?? `NA ${o.na} / n ${o.immersionRi}`;
    specs.push({
      id: `manual-${i}`,
      name,
      na: o.na,
      immersionRi: o.immersionRi,
      designRi: o.designRi,
      public: { id: null, name, na: o.na, immersionRi: o.immersionRi },
    });
  });

  const depthsUm = [...req.depthsUm].sort((a, b) => a - b);
  const predictions = specs.map((spec) => {
    const widefield = theoreticalFwhm({
      modality: "widefield",
      na: spec.na,
      immersionRi: spec.immersionRi,
      emissionWavelengthNm: req.emissionWavelengthNm,
    });
    const modal = theoreticalFwhm({
      modality: req.modality,
      na: spec.na,
      immersionRi: spec.immersionRi,
      emissionWavelengthNm: req.emissionWavelengthNm,
      excitationWavelengthNm: req.excitationWavelengthNm,
      pinholeAu: req.pinholeAu,
    });
    const sLat = modal.lateralNm / widefield.lateralNm;
    const sAx = modal.axialNm / widefield.axialNm;
    const rows = plannerRows({
      objective: spec,
      sampleRi: medium.sampleRi,
      wavelengthNm: req.emissionWavelengthNm,
      depthsUm,
    }).map((r) => ({
      ...r,
      lateralFwhmUm: r.lateralFwhmUm * sLat,
      axialFwhmUm: r.axialFwhmUm * sAx,
    }));
    return {
      objective: spec.public,
      rows,
      diffractionLimited: { lateralFwhmUm: modal.lateralNm / 1000, axialFwhmUm: modal.axialNm / 1000 },
      depthAt25PctAxialUm: null as number | null,
    };
  });
  const maxDepth = Math.max(...depthsUm, 1);
  const ranking = rankObjectives(
    {
      objectives: specs,
      sampleRi: medium.sampleRi,
      wavelengthNm: req.emissionWavelengthNm,
      depthRangeUm: [Math.min(...depthsUm), maxDepth],
    },
    { growthLimit: 1.25 },
  );
  for (const r of ranking) {
    const p = predictions[specs.findIndex((s) => s.id === r.objectiveId)];
    if (p) p.depthAt25PctAxialUm = r.usefulDepthUm;
  }
  return {
    sampleRi: medium.sampleRi,
    mediumName: medium.mediumName,
    predictions,
    ranking: ranking.map((r) => ({
      objective: specs.find((s) => s.id === r.objectiveId)!.public,
      rank: r.rank,
      reason: r.reason,
    })),
    notes: [
      "Scalar Gibson–Lanni model (Gibson & Lanni 1991) at the emission wavelength; Fresnel losses and polarisation are ignored.",
      "The deepest plane is nominal focus travel below the coverslip; widths and brightness are plotted against the actual depth in the sample, which the model's focal shift gives (the API returns both).",
      req.modality === "widefield"
        ? "Widths are widefield widths."
        : `Widths are the ${req.modality} theoretical FWHM scaled by the model's relative broadening with depth.`,
    ],
  };
}
