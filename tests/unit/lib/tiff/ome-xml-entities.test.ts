import { describe, expect, it } from "vitest";
import { parseOmeXml } from "../../../../src/lib/tiff";

/** A one-plane OME-XML document with the given objective immersion, acquisition mode and date. */
const ome = (immersion: string, mode: string, date: string, doctype = "") =>
  `<?xml version="1.0" encoding="UTF-8"?>${doctype}
<OME xmlns="http://www.openmicroscopy.org/Schemas/OME/2016-06">
<Instrument ID="Instrument:0"><Objective ID="Objective:0:0" Immersion="${immersion}"/></Instrument>
<Image ID="Image:0"><AcquisitionDate>${date}</AcquisitionDate>
<Pixels ID="Pixels:0" DimensionOrder="XYZCT" Type="uint16" SizeX="4" SizeY="4" SizeZ="1" SizeC="1" SizeT="1">
<Channel ID="Channel:0:0" AcquisitionMode="${mode}"/><TiffData/></Pixels></Image></OME>`;

describe("parseOmeXml text values", () => {
  it("decodes the predefined entities and character references once", () => {
    // Source: XML 1.0 (Fifth Edition) §4.6 predefined entities and §4.1 character references.
    const m = parseOmeXml(
      ome("Oil &amp; water &quot;A&quot; &lt;b&gt;", "Wide&#70;ield &#x1F9EA; it&apos;s", "&amp;lt;2026&gt;"),
      1,
    );
    expect(m.objective?.immersion).toBe('Oil & water "A" <b>');
    expect(m.channels[0]!.acquisitionMode).toBe("WideField \u{1F9EA} it's");
    expect(m.acquisitionDate).toBe("&lt;2026>"); // "&amp;lt;" is an escaped "&lt;", not "<"
  });

  it("never expands an entity declared in a DOCTYPE", () => {
    const m = parseOmeXml(ome("&x;", "&#0;", "d", '<!DOCTYPE OME [<!ENTITY x "expanded">]>'), 1);
    expect(m.objective?.immersion).toBe("&x;");
    expect(m.channels[0]!.acquisitionMode).toBe("&#0;"); // U+0000 is not a character in XML
  });
});
