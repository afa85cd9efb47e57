package report

// The report's look: warm paper, ink text, a plum rule as its mark, figures
// on white cards; system fonts only (nothing is loaded from anywhere).
const pageCSS = `:root{--ink:#2a2d34;--soft:#555a64;--rule:#d8d2c4;--paper:#fbfaf6;--mark:#aa3377;--card:#fff}
*{box-sizing:border-box}
body{margin:0;background:var(--paper);color:var(--ink);font:15px/1.5 "Liberation Sans",Arial,Helvetica,sans-serif}
header{max-width:1120px;margin:1.4rem auto 0;padding:.2rem 1.2rem .2rem 1rem;border-left:6px solid var(--mark)}
header .kicker{font-size:.8rem;letter-spacing:.08em;text-transform:uppercase;color:var(--soft)}
h1{font-size:1.5rem;margin:.1rem 0 .2rem;font-weight:700}
h2{font-size:1.1rem;margin:1.8rem 0 .5rem;padding-bottom:.2rem;border-bottom:1px solid var(--rule)}
main{max-width:1120px;margin:0 auto;padding:0 1.2rem 2.5rem}
a{color:#335f8c}
p.run{font-size:.9rem;color:var(--soft);margin:.3rem 0}
figure{margin:.8rem 0;background:var(--card);border:1px solid var(--rule);border-radius:3px;padding:.5rem .6rem}
figcaption{font-size:.82rem;color:var(--soft);margin-top:.3rem}
svg.chart{display:block;width:100%;height:auto}
svg.chart text{font-family:"Liberation Sans",Arial,Helvetica,sans-serif !important}
.pair{display:grid;grid-template-columns:1fr 1fr;gap:0 1rem}
.maps{display:grid;grid-template-columns:repeat(auto-fill,minmax(560px,1fr));gap:0 1rem}
@media (max-width:800px){.pair{grid-template-columns:1fr}}
table{border-collapse:collapse;font-variant-numeric:tabular-nums;font-size:.86rem;background:var(--card)}
th,td{padding:.25rem .55rem;border-bottom:1px solid var(--rule);text-align:left;vertical-align:top}
th{font-weight:700;background:#f1eee6}
td.num{text-align:right;white-space:nowrap}
td.id{white-space:nowrap}
table.figures td:first-child{color:var(--soft)}
table.sortable th{cursor:pointer;white-space:nowrap}
table.sortable th[aria-sort=ascending]::after{content:" \25B2"}
table.sortable th[aria-sort=descending]::after{content:" \25BC"}
td.spark{padding:.1rem .3rem}
td.spark svg.chart{width:124px}
.wide{overflow-x:auto}
.flag{display:inline-block;font-size:.75rem;border:1px solid var(--soft);border-radius:2px;padding:0 .3rem;margin:0 .2rem .1rem 0;white-space:nowrap}
.flag.on{border-color:var(--mark);color:var(--mark);font-weight:700}
.caution{border:1px solid var(--mark);border-left-width:6px;background:#fbf2f7;padding:.6rem .9rem;margin:1.5rem 0}
.note{font-size:.86rem;color:var(--soft)}
dl.params{display:grid;grid-template-columns:max-content 1fr;gap:.1rem .8rem;font-size:.86rem;margin:.3rem 0}
dl.params dt{color:var(--soft)}dl.params dd{margin:0}
body.index header,body.index main,body.index footer{max-width:1480px}
td.id .name{white-space:normal;min-width:7rem;max-width:11rem;font-size:.8rem;color:var(--soft)}
footer{max-width:1120px;margin:0 auto;padding:1rem 1.2rem 2rem;font-size:.8rem;color:var(--soft)}
`

// sortJS sorts a table.sortable by the clicked column (numbers by value,
// text alphabetically, empty cells last), on click or Enter.
const sortJS = `(function(){
document.querySelectorAll("table.sortable").forEach(function(t){
 var hs=t.tHead.rows[0].cells;
 [].forEach.call(hs,function(th,i){
  th.tabIndex=0;
  function go(){
   var asc=th.getAttribute("aria-sort")!=="ascending";
   [].forEach.call(hs,function(h){h.removeAttribute("aria-sort")});
   th.setAttribute("aria-sort",asc?"ascending":"descending");
   var b=t.tBodies[0],rows=[].slice.call(b.rows);
   rows.sort(function(r,s){
    var x=r.cells[i].getAttribute("data-v"),y=s.cells[i].getAttribute("data-v");
    if(x===null)x=r.cells[i].textContent;if(y===null)y=s.cells[i].textContent;
    if(x==="")return y===""?0:1;if(y==="")return -1;
    var a=parseFloat(x),c=parseFloat(y),d=(!isNaN(a)&&!isNaN(c))?a-c:x.localeCompare(y);
    return asc?d:-d});
   rows.forEach(function(r){b.appendChild(r)});
  }
  th.addEventListener("click",go);
  th.addEventListener("keydown",function(e){if(e.key==="Enter")go()});
 });
});
})();`
