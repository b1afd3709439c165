// The report's one stylesheet (inline: the file must stand alone). Print rules keep figures and
// tables' rows whole and start the main sections on a new page.
export const REPORT_CSS = `
body{font-family:'DejaVu Sans',system-ui,sans-serif;font-size:10.5pt;line-height:1.45;color:#14181f;max-width:760px;margin:24px auto;padding:0 16px}
h1{font-size:20pt;margin:0 0 4px}h2{font-size:15pt;border-bottom:2px solid #23507a;padding-bottom:2px;margin-top:28px}
h3{font-size:12pt;margin:18px 0 6px}h4{font-size:10.5pt;margin:12px 0 4px}
.subtitle{color:#5b6470;margin:0 0 16px}
table{border-collapse:collapse;margin:6px 0 10px;font-size:9.5pt;width:100%}
th,td{border-bottom:1px solid #d8d5cc;padding:3px 6px;text-align:left;vertical-align:top}
th{background:#eeebe3}
table.narrow{width:auto}table.keyvals td:first-child{color:#3a414b}
table.appendix{font-size:8pt}table.appendix td,table.appendix th{padding:1px 4px}
table.hashes code{font-size:7.5pt;word-break:break-all}
td code{word-break:break-all;overflow-wrap:anywhere}
tr{break-inside:avoid}
h2,h3,h4{break-after:avoid;page-break-after:avoid}
.sentence,.summary p{break-inside:avoid}
figure.chart{margin:10px 0;break-inside:avoid;page-break-inside:avoid}figure.chart svg{display:block}
figure.chart svg{max-width:100%;height:auto}
figcaption{font-size:9pt;color:#3a414b;margin-top:4px}
.sentence{font-size:11pt}
.summary{background:#f3f1ea;border-left:4px solid #23507a;padding:6px 12px;margin:12px 0}
.caution,.cautions li{color:#5a2a10}
.note{font-size:9pt;color:#3a414b}
.na{color:#7a828c;font-style:italic}
pre.spec{font-size:8pt;background:#f7f6f2;border:1px solid #d8d5cc;padding:6px;white-space:pre-wrap;word-break:break-all}
nav.toc ol{padding-left:0;list-style:none}nav.toc li{margin:2px 0}nav.toc a{color:#14181f;text-decoration:none;display:flex;align-items:baseline}nav.toc a::after{content:'';order:1;flex:1;border-bottom:1px dotted #9aa1ab;margin:0 6px}.toc-page{order:2;min-width:2em;text-align:right}
.contrast{break-before:auto}
ul.forms li{font-size:8.5pt}
@media print{body{margin:0;max-width:none}section.new-page{break-before:page}a{color:inherit}}
`;
