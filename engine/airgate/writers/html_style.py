"""The HTML report's stylesheet (screen and print) and its one small script.

Kept apart from the markup so :mod:`airgate.writers.html` stays readable. No web fonts, no
images, nothing fetched: the page is one self-contained file.
"""

CSS = """
:root{--ink:#1f2933;--muted:#5f6b7a;--paper:#f7f6f2;--panel:#fff;--rule:#dedad0;
--brand:#24566b;--fail:#a8322d;--fail-bg:#fbe8e5;--warn:#8a6100;--warn-bg:#fcf1d4;
--waived:#60448c;--waived-bg:#eee8f6;--pass:#2c7249;--pass-bg:#e4f1e8;--info:#3d5a80;
--info-bg:#e8eef6}
*{box-sizing:border-box}
html{font:15px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,"Noto Sans",sans-serif;
color:var(--ink);background:var(--paper)}
body{margin:0}
main{max-width:1180px;margin:0 auto;padding:0 18px 40px}
a{color:var(--brand)}
.bar{background:var(--brand);color:#fff;padding:8px 18px;display:flex;gap:18px;
align-items:center;flex-wrap:wrap}
.bar .brand{font-weight:700;letter-spacing:.04em}
.bar nav a{color:#dfeef4;margin-right:12px;text-decoration:none;font-size:.9em}
.bar nav a:hover{text-decoration:underline}
article.schedule{margin-top:14px}
.top{display:flex;justify-content:space-between;gap:16px;align-items:flex-start;
border-bottom:2px solid var(--rule);padding-bottom:8px}
h1{font-size:1.55em;margin:6px 0 2px}
h2{font-size:1.2em;margin:22px 0 8px;border-bottom:1px solid var(--rule);padding-bottom:3px}
h3{font-size:1.05em;margin:16px 0 6px}
.meta{color:var(--muted);font-size:.88em;margin:0}
.meta b{color:var(--ink);font-weight:600}
.stamp{font-weight:800;font-size:1.5em;letter-spacing:.08em;padding:6px 16px;border-radius:6px;
border:3px solid currentColor;white-space:nowrap}
.stamp.fail{color:var(--fail);background:var(--fail-bg)}
.stamp.pass{color:var(--pass);background:var(--pass-bg)}
.tally{display:flex;flex-wrap:wrap;gap:8px;margin:8px 0 0;padding:0;list-style:none}
.tally li{padding:2px 10px;border-radius:12px;background:var(--panel);border:1px solid var(--rule);
font-size:.9em}
.tally b{font-size:1.05em}
.caution-line{margin:8px 0 0;padding:6px 10px;border-left:4px solid var(--warn);
background:var(--warn-bg);font-size:.85em}
table{border-collapse:collapse;width:100%;background:var(--panel);font-size:.88em;
margin:4px 0 10px}
th,td{padding:4px 7px;border-bottom:1px solid var(--rule);text-align:left;vertical-align:top}
th{background:#eeece5;font-weight:600;white-space:nowrap}
td.n,th.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
tr.fail td:first-child{border-left:4px solid var(--fail)}
tr.warning td:first-child{border-left:4px solid var(--warn)}
tr.waived td:first-child{border-left:4px solid var(--waived)}
.badge{display:inline-block;padding:0 7px;border-radius:9px;font-size:.82em;font-weight:700;
text-transform:uppercase;letter-spacing:.03em}
.badge.fail{background:var(--fail-bg);color:var(--fail)}
.badge.warning{background:var(--warn-bg);color:var(--warn)}
.badge.waived{background:var(--waived-bg);color:var(--waived)}
.badge.pass{background:var(--pass-bg);color:var(--pass)}
.badge.info{background:var(--info-bg);color:var(--info)}
.badge.expired,.badge.unmatched{background:var(--warn-bg);color:var(--warn)}
.badge.applied{background:var(--waived-bg);color:var(--waived)}
.short{color:var(--fail);font-weight:600}
.small{font-size:.85em;color:var(--muted)}
.msg{max-width:34em}
.none{color:var(--pass);font-weight:600}
section.system{background:var(--panel);border:1px solid var(--rule);border-radius:6px;
padding:4px 14px 10px;margin:12px 0}
section.system h3 .badge{margin-left:8px;vertical-align:middle}
.grid-co2{display:grid;grid-template-columns:repeat(auto-fill,minmax(300px,1fr));gap:10px}
figure{margin:0;background:var(--panel);border:1px solid var(--rule);border-radius:4px;
padding:6px}
figcaption{font-size:.82em;color:var(--muted)}
details{margin:4px 0;border:1px solid var(--rule);border-radius:4px;background:var(--panel)}
details>summary{cursor:pointer;padding:4px 8px;font-size:.9em}
details[open]>summary{border-bottom:1px solid var(--rule)}
details table{margin:0}
code,.mono{font-family:ui-monospace,"SFMono-Regular",Menlo,Consolas,monospace;font-size:.92em}
svg.chart{display:block;max-width:100%;height:auto;font-size:11px;
font-family:system-ui,sans-serif}
svg.airflow{max-width:1000px}
svg .grid{stroke:#e6e2d8;stroke-width:1}
svg .tick,svg .axis{fill:var(--muted)}
svg .label,svg .value{fill:var(--ink)}
svg .track{fill:#f1efe9}
svg .got{fill:#6f9fb3}
svg .short .got{fill:#cf6c63}
svg .short .value{fill:var(--fail);font-weight:600}
svg .need{stroke:#1f2933;stroke-width:3}
svg .ppm{fill:none;stroke:var(--brand);stroke-width:1.6}
svg .occupancy{fill:#e7dfc9}
svg .outdoor{stroke:#8f9aa6;stroke-dasharray:2 3}
svg .limit{stroke:var(--fail);stroke-dasharray:6 3}
svg .limit-label{fill:var(--fail)}
.legend{font-size:.82em;color:var(--muted)}
.legend i{display:inline-block;width:18px;height:8px;margin:0 4px 0 10px;vertical-align:middle}
.legend .k-got{background:#6f9fb3}.legend .k-short{background:#cf6c63}
.legend .k-need{background:#1f2933;width:3px;height:12px}
footer.cautions{margin-top:24px;padding:10px 14px;border:2px solid var(--warn);
background:var(--warn-bg);border-radius:6px}
footer.cautions h2{border:0;margin-top:4px}
@media print{
html{font-size:10pt;background:#fff}
.bar nav,.noprint{display:none}
.bar{background:#fff;color:var(--ink);border-bottom:2px solid var(--ink);padding:0 0 4px}
main{max-width:none;padding:0}
section.system,figure,table,details{break-inside:avoid}
h2,h3{break-after:avoid}
article.schedule+article.schedule{break-before:page}
details>summary{list-style:none;font-weight:600}
a{color:inherit;text-decoration:none}
*{-webkit-print-color-adjust:exact;print-color-adjust:exact}
@page{margin:14mm 12mm}
}
"""

#: opens every calculation trail before printing, so the PDF holds them all
SCRIPT = ('addEventListener("beforeprint",function(){document.querySelectorAll("details")'
          '.forEach(function(d){d.open=true})});')
