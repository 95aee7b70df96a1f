"use client";

/** Opens the browser's print dialog; saving as PDF is one of its destinations. */
export function PrintButton() {
  return (
    <button className="btn-quiet" onClick={() => window.print()} data-testid="planner-print-button">
      Print or save as PDF
    </button>
  );
}
