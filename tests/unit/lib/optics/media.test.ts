import { describe, it, expect } from "vitest";
import {
  airRefractiveIndex,
  cauchyFromAbbe,
  getMedium,
  glycerolWaterMedium,
  listMedia,
  refractiveIndex,
  sucroseSolutionMedium,
  tdeWaterMedium,
  waterDensityKgM3,
  waterRefractiveIndexVacuum,
} from "@/lib/optics";

describe("water (IAPWS R9-97)", () => {
  it("reproduces the IAPWS test point", () => {
    // Source: METHODS.md check #39 (IAPWS R9-97, confirmed: search; computed here): 298.15 K, 997.047435 kg/m³, 589.3 nm → 1.33285819.
    expect(waterRefractiveIndexVacuum(589.3, 25, 997.047435)).toBeCloseToAbs(1.33285819, 1e-8);
  });
  it("gives 20 °C and 37 °C values (vacuum) and the handbook value relative to air", () => {
    // Source: METHODS.md check #40 (computed here): 1.33335 vacuum / 1.33299 relative to air; handbook n_D 1.3330.
    expect(waterRefractiveIndexVacuum(589.3, 20, 998.2067)).toBeCloseToAbs(1.33335, 2e-5);
    expect(refractiveIndex("water", { wavelengthNm: 589.3, temperatureC: 20 })).toBeCloseToAbs(1.33299, 2e-5);
    // Source: METHODS.md check #41 (computed here): 37 °C, 993.33 kg/m³, 520 nm → 1.33389.
    expect(waterRefractiveIndexVacuum(520, 37, 993.33)).toBeCloseToAbs(1.33389, 2e-5);
    // Source: METHODS.md §9.1 (computed here): 20 °C 546.1 nm 1.33483, 920 nm 1.32666 (vacuum).
    expect(waterRefractiveIndexVacuum(546.1, 20)).toBeCloseToAbs(1.33483, 2e-5);
    expect(waterRefractiveIndexVacuum(920, 20)).toBeCloseToAbs(1.32666, 2e-5);
  });
  it("has dn/dT ≈ −0.98e-4 /K at 20–25 °C", () => {
    // Source: METHODS.md check #42 (computed here from IAPWS).
    const slope =
      (refractiveIndex("water", { wavelengthNm: 589, temperatureC: 25 }) -
        refractiveIndex("water", { wavelengthNm: 589, temperatureC: 20 })) /
      5;
    expect(slope).toBeCloseToAbs(-0.98e-4, 0.05e-4);
  });
  it("agrees with the Daimon–Masumura Sellmeier at 20 °C", () => {
    // Source: METHODS.md check #43: Daimon & Masumura, Appl Opt 46:3811 (2007), coefficients confirmed: search (refractiveindex.info, CC0).
    const B = [0.5684027565, 0.1726177391, 0.02086189578, 0.1130748688];
    const C = [0.005101829712, 0.01821153936, 0.02620722293, 10.69792721];
    const sellmeier = (um: number) =>
      Math.sqrt(1 + B.reduce((s, b, i) => s + (b * um * um) / (um * um - C[i]), 0));
    expect(sellmeier(0.5893)).toBeCloseToAbs(1.33335, 1e-5);
    for (const nm of [486.1, 546.1, 589.3, 656.3]) {
      expect(waterRefractiveIndexVacuum(nm, 20)).toBeCloseToAbs(sellmeier(nm / 1000), 3e-5);
    }
  });
  it("interpolates the density table and refuses out-of-range temperatures", () => {
    // Source: METHODS.md §9.1 density table (IAPWS-95, from memory): 23 °C 997.539 kg/m³.
    expect(waterDensityKgM3(23)).toBeCloseToAbs(997.539, 1e-6);
    expect(waterDensityKgM3(21.5)).toBeLessThan(waterDensityKgM3(20));
    expect(waterDensityKgM3(21.5)).toBeGreaterThan(waterDensityKgM3(23));
    expect(() => waterDensityKgM3(80)).toThrow(/temperatureC must lie in \[0, 50\] °C, got 80/);
  });
  it("air ratio is ≈ 1.00027 in the visible", () => {
    // Source: METHODS.md "RI reference convention": n_air ≈ 1.00027 (1.33335/1.33299).
    expect(airRefractiveIndex(589.3, 20)).toBeCloseToAbs(1.33335 / 1.33299, 2e-5);
  });
});

describe("immersion oil, cover glass and other media", () => {
  it("derives the ISO oil Cauchy and its values", () => {
    // Source: METHODS.md §9.2 (computed here from ISO 8036 n_e 1.5180, ν_e 44): A = 1.49752, B = 0.006106 µm².
    const c = cauchyFromAbbe(1.518, 44);
    expect(c.a).toBeCloseToAbs(1.49752, 1e-5);
    expect(c.b).toBeCloseToAbs(0.006106, 1e-6);
    // Source: METHODS.md check #44 (ISO 8036, confirmed: search): n_e = 1.5180 at 546.07 nm, 23 °C.
    expect(refractiveIndex("immersion-oil", { wavelengthNm: 546.07, temperatureC: 23 })).toBeCloseToAbs(
      1.518,
      1e-6,
    );
    // Source: METHODS.md check #45 (computed here, nominal model): 1.5201 at 520 nm, 1.5145 at 600 nm.
    expect(refractiveIndex("immersion-oil", { wavelengthNm: 520, temperatureC: 23 })).toBeCloseToAbs(
      1.5201,
      2e-4,
    );
    expect(refractiveIndex("immersion-oil", { wavelengthNm: 600, temperatureC: 23 })).toBeCloseToAbs(
      1.5145,
      2e-4,
    );
    // Source: METHODS.md check #46 (dn/dT −4e-4 from memory): n_e ≈ 1.5124 at 37 °C.
    expect(refractiveIndex("immersion-oil", { wavelengthNm: 546.07, temperatureC: 37 })).toBeCloseToAbs(
      1.5124,
      0.001,
    );
  });
  it("cover glass per ISO 8255-1", () => {
    // Source: METHODS.md check #47 and §9.3 (ISO 8255-1 from memory; Cauchy computed here): n_e 1.5255, 1.5272 at 520 nm, 1.5232 at 589 nm.
    expect(refractiveIndex("cover-glass", { wavelengthNm: 546.07, temperatureC: 23 })).toBeCloseToAbs(
      1.5255,
      1e-6,
    );
    expect(refractiveIndex("cover-glass", { wavelengthNm: 520, temperatureC: 23 })).toBeCloseToAbs(
      1.5272,
      2e-4,
    );
    expect(refractiveIndex("cover-glass", { wavelengthNm: 589, temperatureC: 23 })).toBeCloseToAbs(
      1.5232,
      2e-4,
    );
  });
  it("glycerol (Rheims) and ethyl cinnamate (Krauter)", () => {
    // Source: METHODS.md check #48 (Rheims 1997, confirmed: search; computed here): 1.4722 at 589.3 nm, 25 °C.
    expect(refractiveIndex("glycerol", { wavelengthNm: 589.3, temperatureC: 25 })).toBeCloseToAbs(
      1.4722,
      2e-4,
    );
    // Source: METHODS.md §9.4 (computed here): 1.4699 at 656 nm, 1.4664 at 800 nm.
    expect(refractiveIndex("glycerol", { wavelengthNm: 656, temperatureC: 25 })).toBeCloseToAbs(1.4699, 2e-4);
    expect(refractiveIndex("glycerol", { wavelengthNm: 800, temperatureC: 25 })).toBeCloseToAbs(1.4664, 2e-4);
    // Source: METHODS.md check #49 (Krauter 2015, confirmed: search; computed here): 1.5579 at 589.3 nm; 1.5649 at 546 nm.
    expect(refractiveIndex("ethyl-cinnamate", { wavelengthNm: 589.3, temperatureC: 20 })).toBeCloseToAbs(
      1.5579,
      5e-4,
    );
    expect(refractiveIndex("ethyl-cinnamate", { wavelengthNm: 546, temperatureC: 20 })).toBeCloseToAbs(
      1.5649,
      5e-4,
    );
  });
  it("clearing media and TDE fall in their published ranges", () => {
    // Source: METHODS.md check #50 (confirmed: search): benzyl alcohol : benzyl benzoate 1:2 is 1.55–1.56 in the visible.
    const babb = refractiveIndex("babb", { wavelengthNm: 589, temperatureC: 23 });
    expect(babb).toBeGreaterThanOrEqual(1.55);
    expect(babb).toBeLessThanOrEqual(1.56);
    // Source: METHODS.md check #51 (range confirmed: search, Staudt 2007; value from memory): TDE 97 % ≈ 1.515–1.518 (tol 0.003).
    expect(refractiveIndex(tdeWaterMedium(97), { wavelengthNm: 589, temperatureC: 23 })).toBeCloseToAbs(
      1.5165,
      0.003,
    );
  });
  it("glycerol–water follows the spline, not a straight line", () => {
    // Source: METHODS.md §9.4 (table from memory): 50 % → 1.3981; a linear rule is 0.005 too high at 50 %.
    expect(glycerolWaterMedium(50).referenceRi).toBeCloseToAbs(1.3981, 1e-6);
    expect((1.333 + 1.474) / 2 - glycerolWaterMedium(50).referenceRi).toBeGreaterThan(0.004);
    const g = [0, 25, 45, 65, 85, 100].map((p) => glycerolWaterMedium(p).referenceRi);
    for (let i = 1; i < g.length; i++) expect(g[i]).toBeGreaterThan(g[i - 1]);
    // Source: METHODS.md §9.1/§9.5 (ICUMSA sucrose table start 1.33299 at 0 °Brix, confirmed: search).
    expect(sucroseSolutionMedium(0).referenceRi).toBeCloseToAbs(1.33299, 1e-6);
  });
});

describe("library API", () => {
  it("lists entries with the required fields and generic names", () => {
    const media = listMedia();
    const ids = new Set(media.map((m) => m.id));
    expect(ids.size).toBe(media.length);
    for (const id of [
      "water",
      "immersion-oil",
      "silicone-oil",
      "glycerol",
      "cover-glass",
      "tde-water-97",
      "babb",
      "dibenzyl-ether",
      "ethyl-cinnamate",
      "cytoplasm",
      "air",
      "glycerol-water-80",
    ]) {
      expect(ids.has(id)).toBe(true);
    }
    for (const m of media) {
      expect(["immersion", "mounting", "clearing", "reference"]).toContain(m.category);
      expect(["confirmed", "from memory", "common practice"]).toContain(m.evidence);
      expect(m.source.length).toBeGreaterThan(10);
      // The reference value is reproduced by the model at its own reference conditions.
      expect(
        refractiveIndex(m, { wavelengthNm: m.referenceWavelengthNm, temperatureC: m.referenceTemperatureC }),
      ).toBeCloseToAbs(m.referenceRi, 5e-5);
    }
    expect(JSON.parse(JSON.stringify(media))).toEqual(media);
  });
  it("resolves parametric ids and rejects unknown ones", () => {
    expect(getMedium("glycerol-water-85")?.referenceRi).toBeGreaterThan(
      getMedium("glycerol-water-80")!.referenceRi,
    );
    expect(getMedium("no-such-medium")).toBeUndefined();
    expect(getMedium("glycerol-water-120")).toBeUndefined();
    expect(() => refractiveIndex("no-such-medium", { wavelengthNm: 520, temperatureC: 20 })).toThrow(
      /unknown medium id "no-such-medium"/,
    );
  });
  it("evaluates a custom medium with dispersion and temperature", () => {
    const custom = {
      kind: "custom" as const,
      referenceRi: 1.45,
      cauchyBUm2: 0.004,
      dnDtPerK: -3e-4,
      referenceWavelengthNm: 589.3,
      referenceTemperatureC: 20,
    };
    expect(refractiveIndex(custom, { wavelengthNm: 589.3, temperatureC: 20 })).toBeCloseTo(1.45, 12);
    expect(refractiveIndex(custom, { wavelengthNm: 500, temperatureC: 30 })).toBeCloseTo(
      1.45 + 0.004 * (1 / 0.25 - 1 / 0.5893 ** 2) - 3e-3,
      12,
    );
    expect(() => refractiveIndex(custom, { wavelengthNm: 0, temperatureC: 20 })).toThrow(
      /wavelengthNm must be > 0, got 0/,
    );
  });
  it("listMedia returns copies (callers cannot corrupt the library)", () => {
    const a = listMedia();
    a[0].referenceRi = 9;
    expect(listMedia()[0].referenceRi).not.toBe(9);
  });
});
