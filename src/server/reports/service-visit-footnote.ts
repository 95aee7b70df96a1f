/** Shown under the service-visit report, on the visit page and in the PDF. */
export const SERVICE_VISIT_FOOTNOTE =
  "Baseline = centre and σ of the individuals chart of the last epoch before the visit. " +
  '"Restored" = as-left ratios below the acceptance limits and no more than 3σ above that baseline. ' +
  "These numbers are advisory and do not replace the manufacturer's own acceptance tests.";
