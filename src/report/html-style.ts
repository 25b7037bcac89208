/** Inline CSS of the HTML report (our own look: quiet paper colours, one accent). */
export const REPORT_CSS = `
:root{--ink:#1d2430;--muted:#5b6675;--line:#d6dbe1;--paper:#fbfaf7;--card:#ffffff;--accent:#0b5d8a;--warn:#8a3b0b}
*{box-sizing:border-box}
body{margin:0;font:14px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;color:var(--ink);background:var(--paper)}
header.top{padding:18px 28px 10px;border-bottom:3px solid var(--accent);background:var(--card)}
header.top h1{margin:0;font-size:22px;letter-spacing:.2px}
header.top .sub{color:var(--muted);margin-top:4px}
main{padding:12px 28px 40px;max-width:1400px}
section{background:var(--card);border:1px solid var(--line);border-radius:8px;padding:14px 18px;margin:16px 0}
section h2{margin:0 0 10px;font-size:17px}
.caution{border-left:6px solid var(--warn);background:#fff7f0}
.controls{display:flex;gap:16px;flex-wrap:wrap;align-items:end;margin-bottom:10px}
.controls label{display:flex;flex-direction:column;font-size:12px;color:var(--muted);gap:2px}
select{font:inherit;padding:3px 6px}
table{border-collapse:collapse;font-variant-numeric:tabular-nums}
.rank{overflow-x:auto}
.rank table{min-width:100%}
.rank th,.rank td{border-bottom:1px solid var(--line);padding:4px 8px;text-align:right;white-space:nowrap;vertical-align:top}
.rank th:first-child,.rank td:first-child{text-align:left}
.rank thead th{position:sticky;top:0;background:#eef2f6}
.rank tbody th,.rank thead th:first-child{position:sticky;left:0;z-index:1}
.rank tbody th{background:var(--card)}
.rank thead th:first-child{z-index:2}
.rank th button{font:inherit;font-weight:600;border:0;background:none;cursor:pointer;padding:2px 4px;color:var(--ink)}
.rank th button:focus-visible{outline:2px solid var(--accent)}
.rank th[aria-sort=ascending] button::after{content:" \\25B2";color:var(--accent)}
.rank th[aria-sort=descending] button::after{content:" \\25BC";color:var(--accent)}
.ci{display:block;font-size:11px;color:var(--muted)}
.unit{font-weight:400;color:var(--muted);font-size:11px}
.charts{display:flex;gap:18px;flex-wrap:wrap}
.charts figure{margin:0}
.charts figcaption{font-size:12px;color:var(--muted);max-width:520px}
svg text{font:11px system-ui,sans-serif;fill:var(--ink)}
.legend-row{display:flex;gap:22px;flex-wrap:wrap;align-items:center;font-size:12px;color:var(--muted)}
.swatch{display:inline-block;width:14px;height:14px;border:1px solid #999;vertical-align:middle;margin-right:4px}
.hatch{background:repeating-linear-gradient(45deg,#606060 0 2px,#ececec 2px 4px)}
details.pair{border-top:1px solid var(--line);padding:6px 0}
details.pair summary{cursor:pointer;font-weight:600}
details.pair summary .st{font-weight:400;color:var(--muted);margin-left:8px}
.pairview{display:flex;gap:18px;flex-wrap:wrap;margin-top:8px}
.tiles{display:grid;grid-template-columns:repeat(auto-fill,minmax(200px,1fr));gap:10px;flex:1 1 640px}
.tiles figure{margin:0}
.tiles img{width:100%;height:auto;image-rendering:pixelated;border:1px solid var(--line);background:#ddd}
.failedbox{aspect-ratio:4/3;display:flex;align-items:center;justify-content:center;border:1px dashed var(--warn);color:var(--warn);background:#fff7f0;font-size:12px}
.tiles figcaption{font-size:11px;color:var(--muted);overflow-wrap:anywhere}
.figs th,.figs td{border-bottom:1px solid var(--line);padding:2px 6px;text-align:right;font-size:12px}
.figs th{vertical-align:bottom}
.figs th:first-child,.figs td:first-child{text-align:left;max-width:220px}
.figs td:first-child{overflow-wrap:anywhere}
.pairlegend{display:flex;gap:8px 26px;flex-wrap:wrap;align-items:flex-end;margin:8px 0 4px;font-size:12px;color:var(--muted)}
.pairlegend .keys{display:flex;gap:4px 12px;flex-wrap:wrap;align-items:center;padding-bottom:14px}
.side{overflow-x:auto;max-width:100%}
.failed{color:var(--warn)}
.prov dl{display:grid;grid-template-columns:max-content 1fr;gap:2px 14px;margin:0}
.prov dt{color:var(--muted)}
.prov dd{margin:0;overflow-wrap:anywhere}
.prov table td,.prov table th{border-bottom:1px solid var(--line);padding:2px 8px;text-align:left;font-size:12px;overflow-wrap:anywhere}
code{font-family:ui-monospace,Menlo,Consolas,monospace;font-size:12px}
`;
