/**
 * dist/bigFitCheck.js: the big-fit session on a page's global (ElxBigFit), for the browser test
 * (test/browser/workers.test.ts) to fit in the preview with real Web Workers. Not loaded by the
 * add-in's pages; the pane uses session.ts through its own bundle.
 */
import { closeIdleWorkers } from "./pool";
import { openBigFit } from "./session";

(globalThis as { ElxBigFit?: unknown }).ElxBigFit = { openBigFit, closeIdleWorkers };
