/*
 * The side pane (shared runtime with the custom functions). Placeholder until the pane's issue:
 * it only reports that the functions are loaded. Guarded so that it is inert outside the host.
 */
export function paneStatus(): string {
  return "Elasticell functions are loaded.";
}

if (typeof Office !== "undefined" && typeof document !== "undefined") {
  Office.onReady(() => {
    const el = document.getElementById("elx-status");
    if (el) el.textContent = paneStatus();
  });
}
