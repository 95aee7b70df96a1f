/** The medium library (built in, from lib/optics) plus the facility's own media. */
import { and, eq } from "drizzle-orm";
import { getMedium, listMedia as listLibraryMedia, refractiveIndex } from "../../lib/optics";
import type { Db } from "../db/client";
import { media } from "../db/schema";
import type { Actor } from "../auth/permissions";
import { AppError } from "../http/errors";

export interface MediumDto {
  id: string;
  name: string;
  kind: "library" | "custom";
  category: string;
  /** RI at 589.3 nm and 23 °C, relative to air. */
  refractiveIndexD23: number;
  referenceWavelengthNm: number;
  dnDtPerK: number | null;
  source: string;
  evidence: string;
}

export async function listMediaForActor(db: Db, actor: Actor): Promise<MediumDto[]> {
  const library = listLibraryMedia().map((m) => ({
    id: m.id,
    name: m.name,
    kind: "library" as const,
    category: m.category,
    refractiveIndexD23: refractiveIndex(m, { wavelengthNm: 589.3, temperatureC: 23 }),
    referenceWavelengthNm: m.referenceWavelengthNm,
    dnDtPerK: m.dnDtPerK,
    source: m.source,
    evidence: m.evidence,
  }));
  const custom = await db.select().from(media).where(eq(media.facilityId, actor.facilityId));
  return [
    ...library,
    ...custom.map((c) => ({
      id: c.id,
      name: c.name,
      kind: "custom" as const,
      category: "custom",
      refractiveIndexD23: c.refractiveIndex + (c.dnDtPerK ?? 0) * (23 - c.referenceTemperatureC),
      referenceWavelengthNm: c.referenceWavelengthNm,
      dnDtPerK: c.dnDtPerK,
      source: c.notes ?? "facility measurement",
      evidence: "facility",
    })),
  ];
}

/**
 * The RI of a medium at a wavelength and temperature: a library medium by id
 * (dispersion and temperature models from lib/optics), a facility medium by uuid
 * (its Cauchy B and dn/dT when given), or a plain RI typed by the user.
 */
export async function resolveMediumRi(
  db: Db,
  actor: Actor,
  input: { mediumId?: string; sampleRi?: number; wavelengthNm: number; temperatureC?: number },
): Promise<{ sampleRi: number; mediumId: string | null; mediumName: string }> {
  if (input.sampleRi !== undefined) {
    return { sampleRi: input.sampleRi, mediumId: null, mediumName: `custom (n = ${input.sampleRi})` };
  }
  if (!input.mediumId) throw new AppError("unprocessable", "Give a mediumId or a sampleRi.");
  const conditions = { wavelengthNm: input.wavelengthNm, temperatureC: input.temperatureC ?? 23 };
  const lib = getMedium(input.mediumId);
  if (lib) return { sampleRi: refractiveIndex(lib, conditions), mediumId: lib.id, mediumName: lib.name };
  if (/^[0-9a-f-]{36}$/i.test(input.mediumId)) {
    const [custom] = await db
      .select()
      .from(media)
      .where(and(eq(media.facilityId, actor.facilityId), eq(media.id, input.mediumId)))
      .limit(1);
    if (custom) {
      const dT = (input.temperatureC ?? custom.referenceTemperatureC) - custom.referenceTemperatureC;
      const dispersion =
        custom.cauchyBUm2 != null
          ? custom.cauchyBUm2 *
            (1 / (input.wavelengthNm / 1000) ** 2 - 1 / (custom.referenceWavelengthNm / 1000) ** 2)
          : 0;
      return {
        sampleRi: custom.refractiveIndex + dispersion + (custom.dnDtPerK ?? 0) * dT,
        mediumId: custom.id,
        mediumName: custom.name,
      };
    }
  }
  throw new AppError("unprocessable", `Unknown medium '${input.mediumId}'. Pick one from GET /api/v1/media.`);
}
