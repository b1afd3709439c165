// The plain-text summary of an analysis for the terminal (built in src/report/text so the
// report can reuse its pieces).
export { formatAnalysisText as formatReport } from '../report/text/formatAnalysisText.js';
