"use client";

/** The browser's print dialog saves the report as a PDF; print styles hide the app chrome. */
export function PrintButton() {
  return (
    <button className="btn-quiet" onClick={() => window.print()}>
      Print or save as PDF
    </button>
  );
}
