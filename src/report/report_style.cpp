// The report's style sheet: one inline <style>, system fonts only (nothing is fetched),
// A4 print rules (the plate sections print on landscape pages).
#include "report/report_model.hpp"

namespace vzero::detail::report {

std::string page_css() {
  return R"css(
:root{color-scheme:light}
*{box-sizing:border-box}
html{font-size:15px}
body{margin:0;background:#fff;color:#1d2229;font-family:"Noto Sans","DejaVu Sans","Liberation Sans",Arial,sans-serif;line-height:1.45}
main{max-width:1380px;margin:0 auto;padding:20px 28px 48px}
header{border-bottom:3px solid #1d2547;padding-bottom:10px;margin-bottom:10px}
.kicker{text-transform:uppercase;letter-spacing:.12em;font-size:.78rem;color:#2f7a70;margin:0;font-weight:700}
h1{font-size:1.7rem;margin:.1em 0 .2em;line-height:1.2}
h2{font-size:1.3rem;margin:1.6em 0 .5em;padding-top:.4em;border-top:1px solid #d8dde3}
h3{font-size:1.05rem;margin:1.2em 0 .4em}
h4{font-size:.95rem;margin:1em 0 .3em}
.meta,.lede,.note{color:#434b55;margin:.3em 0 .6em}
.note{font-size:.9rem}
.warn{color:#8a3300;font-weight:600}
.formula{font-family:"DejaVu Sans Mono","Liberation Mono",monospace;font-size:.9rem;margin:.2em 0}
.stats{font-size:.9rem;margin:.2em 0}
a{color:#0b5f99}
nav.toc{display:flex;flex-wrap:wrap;gap:4px 16px;font-size:.9rem;margin-top:6px}
table{border-collapse:collapse;font-size:.85rem;margin:.4em 0 1em;font-variant-numeric:tabular-nums}
th,td{padding:3px 8px;border-bottom:1px solid #e3e7eb;text-align:left;vertical-align:top}
th{background:#f1f4f6;font-weight:600}
td.num,th.num{text-align:right;white-space:nowrap}
td.hash{font-family:"DejaVu Sans Mono","Liberation Mono",monospace;font-size:.74rem;word-break:break-all}
td.flag{font-weight:600;white-space:nowrap}
span.opt{white-space:nowrap}
td.which{font-size:.8rem}
td.which a{margin-right:1px}
ul.notes{font-size:.88rem;color:#434b55}
dl.options{display:grid;grid-template-columns:repeat(auto-fill,minmax(250px,1fr));gap:2px 18px;font-size:.82rem;margin:.3em 0 1em}
dl.options div{display:flex;gap:6px;border-bottom:1px dotted #dfe3e7}
dl.options dt{color:#5b6470;min-width:0;overflow-wrap:anywhere}
dl.options dd{margin:0;font-weight:600;overflow-wrap:anywhere;min-width:min(12ch,100%)}
figure{margin:.5em 0 1.2em}
figcaption{font-size:.82rem;color:#434b55;max-width:62em;margin-top:2px}
svg{max-width:100%;height:auto;display:block}
.fit-figures{display:flex;flex-wrap:wrap;gap:8px 18px;align-items:flex-start}
.chart{width:420px;max-width:100%}
.scroll{overflow-x:auto}
nav.blocks{font-size:.85rem;display:flex;flex-wrap:wrap;gap:4px 12px;margin:.4em 0}
a.up{font-size:.8rem;font-weight:400;margin-left:1em}
.key-row{margin:.3em 0}
.grid{stroke:#eceff2;stroke-width:1}
.axes .frame{fill:none;stroke:#8a939c;stroke-width:1}
.tick-mark{stroke:#8a939c;stroke-width:1}
.tick{font-size:10.5px;fill:#343b43}
.tick.small{font-size:8.5px}
.axis-title{font-size:11.5px;fill:#1d2229}
.grid-label{font-size:10px;fill:#434b55;font-weight:600}
.key{font-size:10px;fill:#1d2229}
.well .frame{fill:#fff;stroke:#c3c9cf;stroke-width:.8}
.well.role-blank .frame{fill:#f5f2ea}
.well.role-standard .frame{fill:#edf3f8}
.well.role-empty .frame{fill:#fbfbfb;stroke-dasharray:2 2}
.well.own-scale .frame{fill:#f3f3f3}
.well.flagged .frame,.key-frame.flagged{stroke:#D55E00;stroke-width:1.4}
.key-frame{fill:#fff}
.unread-well{fill:none;stroke:#dfe3e7;stroke-dasharray:1 3}
.window{fill:#56B4E9;fill-opacity:.28;stroke:none}
.trace{fill:none;stroke:#7a828c;stroke-width:.9;stroke-linejoin:round}
.used{fill:none;stroke:#1d2229}
.window-ext{fill:#56B4E9;fill-opacity:.12;stroke:none}
.fit-line{fill:none;stroke:#0072B2;stroke-width:1.8}
.fit-curve-well{fill:none;stroke:#0072B2;stroke-width:1.8}
.fit-line.tangent{stroke:#D55E00;stroke-width:1.3;stroke-dasharray:3.5 2}
.scale-bar{stroke:#1d2229;stroke-width:1.6}
.ytick{font-size:6.5px;fill:#434b55}
.scale-label{font-size:8px;fill:#1d2229}
.outlier{fill:none;stroke:#D55E00;stroke-width:1.3}
.unread{fill:#E69F00;stroke:#7a4f00;stroke-width:.4}
.wname{font-size:10px;font-weight:700;fill:#1d2229}
.wrole{font-size:8px;fill:#5b6470}
.wv0{font-size:9px;fill:#1d2229}
.wflags{font-size:7.6px;fill:#9a3d00}
.wflags.quiet{fill:#5b6470}
.wnote{font-size:8px;fill:#8a939c}
.hm-cell{stroke:none}
.hm-empty{fill:#fff;stroke:#aab2ba;stroke-width:.8;stroke-dasharray:2 1.5}
.hm-none{fill:#e4e7ea;stroke:none}
.hm-none-mark{stroke:#959daa;stroke-width:1}
.hm-unread{fill:none;stroke:#e8ebee;stroke-width:.6}
.hm-flag{fill:#D55E00;stroke:#fff;stroke-width:.7}
.hm-value{font-size:8.5px}
.bar-step{stroke:none}
.bar-frame{fill:none;stroke:#8a939c}
.bar-beyond{fill:#1d2547}
.role-empty .trace{stroke:#b3b9c0}
.role-empty .used{stroke:#9aa2ab}
.role-empty .window{fill-opacity:.12}
.role-empty .fit-line{stroke:#8fb3cf;stroke-width:1.2}
.role-empty .wflags{fill:#8a939c}
.ci-band{fill-opacity:.16;stroke:none}
.fit-curve{fill:none;stroke-width:1.8}
.pt,.legend-pt{fill:#fff;fill-opacity:.85;stroke-width:1.3}
.pt.left-out{fill:none;stroke-dasharray:1.5 1}
.zero{stroke:#5b6470;stroke-dasharray:3 3}
.lod-band{fill:#CC79A7;fill-opacity:.14}
@media print{
@page{size:A4;margin:12mm}
@page wide{size:A4 landscape;margin:10mm}
html{font-size:10pt}
main{max-width:none;padding:0}
nav.toc,nav.blocks,a.up{display:none}
a{color:inherit;text-decoration:none}
section.plate{page:wide;break-before:page}
figure,.fit-figures,table.params,.standard,.block{break-inside:avoid}
h2,h3,h4{break-after:avoid}
.scroll{overflow:visible}
.chart{width:48%}
}
)css";
}

}  // namespace vzero::detail::report
