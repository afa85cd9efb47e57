package report

import (
	"bytes"
	"html/template"
	"math"
)

// figView is a figure as a page shows it.
type figView struct {
	ID      string
	SVG     template.HTML // trusted: drawn by the SVG back end, which escapes all text
	XMap    string
	YMap    string
	PNG     string
	Caption string
}

func view(f *Figure, id, caption, png string) *figView {
	if f == nil {
		return nil
	}
	return &figView{ID: id, SVG: template.HTML(f.SVG), XMap: f.XMap.attr(), YMap: f.YMap.attr(), PNG: png, Caption: caption}
}

type figRow struct{ Label, Value, Note string }

type seriesPage struct {
	S                   *Series
	Title               string
	RunText             string
	Readings, Resid     *figView
	ACF, LB             *figView
	Rows                []figRow
	Flags               []flagView
	ModelText, RankText string
	ACFText             string
	Notes               string
	Station             []KV
	Caution, Footer     string
	CSS                 template.CSS
}

type indexRow struct {
	Page                          string
	Spark                         template.HTML
	Station, Name, Variable, Unit string
	N, Years                      string
	NKey, YearsKey                string
	Slope, SlopeDec, Sen, SenCI   string
	SlopeKey, SlopeDecKey, SenKey string
	MKP, HACP, FDR                string
	MKPKey, HACPKey, FDRKey       string
	Flags                         []flagView
	Meta                          []string
	OnTheFly                      bool
}

type indexPage struct {
	Title, RunText  string
	FDRFamily       string
	Params          []KV
	Maps, Groups    []*figView
	GroupBy         string
	MetaCols        []string
	Rows            []indexRow
	Notes           []string
	Caution, Footer string
	CSS             template.CSS
	JS              template.JS
}

var pageTmpl = template.Must(template.New("series").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title><style>{{.CSS}}</style></head>
<body>
<header><div class="kicker"><a href="index.html">Trend report</a> · series {{.S.ID}}</div>
<h1>{{.S.Station.Name}} <span class="note">({{.S.Station.ID}})</span> — {{.S.Variable}}</h1>
<p class="run">{{.RunText}}</p>
{{range .Flags}}<span class="flag on">{{.Label}}</span>{{end}}
</header>
<main>
{{with .Readings}}<figure id="{{.ID}}" data-x-map="{{.XMap}}" data-y-map="{{.YMap}}">{{.SVG}}<figcaption>{{.Caption}}{{if .PNG}} <a href="{{.PNG}}">PNG</a>{{end}}</figcaption></figure>{{end}}
{{with .Resid}}<figure id="{{.ID}}" data-x-map="{{.XMap}}" data-y-map="{{.YMap}}">{{.SVG}}<figcaption>{{.Caption}}{{if .PNG}} <a href="{{.PNG}}">PNG</a>{{end}}</figcaption></figure>{{end}}
<div class="pair">
{{with .ACF}}<figure id="{{.ID}}" data-x-map="{{.XMap}}" data-y-map="{{.YMap}}">{{.SVG}}<figcaption>{{.Caption}}{{if .PNG}} <a href="{{.PNG}}">PNG</a>{{end}}</figcaption></figure>{{end}}
{{with .LB}}<figure id="{{.ID}}" data-x-map="{{.XMap}}" data-y-map="{{.YMap}}">{{.SVG}}<figcaption>{{.Caption}}{{if .PNG}} <a href="{{.PNG}}">PNG</a>{{end}}</figcaption></figure>{{end}}
</div>
<h2>Figures</h2>
<p><strong>Model.</strong> {{.ModelText}} <strong>Rank trend test:</strong> {{.RankText}}. <strong>Residual ACF</strong> {{.ACFText}}.</p>
<div class="wide"><table class="figures"><thead><tr><th>figure</th><th>value</th><th>note</th></tr></thead><tbody>
{{range .Rows}}<tr><td>{{.Label}}</td><td class="num">{{.Value}}</td><td>{{.Note}}</td></tr>
{{end}}</tbody></table></div>
{{if .Notes}}<p class="note"><strong>Notes:</strong> {{.Notes}}</p>{{end}}
<p class="caution">{{.Caution}}</p>
<h2>Station</h2>
<table class="figures"><tbody>
{{range .Station}}<tr><td>{{.Key}}</td><td>{{.Value}}</td></tr>
{{end}}</tbody></table>
</main>
<footer>{{.Footer}}</footer>
</body></html>
`))

var indexTmpl = template.Must(template.New("index").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title><style>{{.CSS}}</style></head>
<body class="index">
<header><div class="kicker">Trend report</div>
<h1>{{.Title}}</h1>
<p class="run">{{.RunText}}</p>
<dl class="params">{{range .Params}}<dt>{{.Key}}</dt><dd>{{.Value}}</dd>{{end}}</dl>
</header>
<main>
<p class="caution">{{.Caution}}</p>
{{if .Maps}}<h2>Where the trends are</h2>
<p class="note">One map per variable: longitude and latitude with the cosine of the mean latitude as the x scale. Symbol: a wedge points up for a rising and down for a falling Sen slope; filled when the run flagged the trend after the FDR adjustment, outlined when not; a ring when there is no estimate or the slope is zero.</p>
<div class="maps">{{range .Maps}}<figure id="{{.ID}}" data-x-map="{{.XMap}}" data-y-map="{{.YMap}}">{{.SVG}}<figcaption>{{.Caption}}{{if .PNG}} <a href="{{.PNG}}">PNG</a>{{end}}</figcaption></figure>{{end}}</div>{{end}}
<h2>Series</h2>
<p class="note">Click a column heading to sort. Slopes are per year (Sen slope: median of pairwise slopes, with its interval); p rank: the rank trend test's p-value, with its correction for serial correlation where the method has one (see each page); p HAC: least-squares slope with the Newey–West standard error; q FDR: the rank test's p-value adjusted by Benjamini–Hochberg across {{.FDRFamily}}.</p>
<div class="wide"><table class="sortable" id="series-table"><thead><tr>
<th>trend</th><th>station</th><th>variable (unit)</th><th>n</th><th>years</th>
<th>slope / year</th><th>slope / decade</th><th>Sen slope / year</th><th>Sen interval</th><th>p rank</th><th>p HAC</th><th>q FDR</th><th>flags</th>
{{range .MetaCols}}<th>{{.}}</th>{{end}}</tr></thead><tbody>
{{range .Rows}}<tr><td class="spark" data-v="{{.SlopeKey}}"><a href="{{.Page}}">{{.Spark}}</a></td>
<td class="id" data-v="{{.Station}}"><a href="{{.Page}}">{{.Station}}</a>{{if .Name}}<div class="name">{{.Name}}</div>{{end}}</td><td data-v="{{.Variable}}">{{.Variable}}{{if .Unit}} <span class="note">({{.Unit}})</span>{{end}}</td>
<td class="num" data-v="{{.NKey}}">{{.N}}</td><td class="num" data-v="{{.YearsKey}}">{{.Years}}</td>
<td class="num" data-v="{{.SlopeKey}}">{{.Slope}}</td><td class="num" data-v="{{.SlopeDecKey}}">{{.SlopeDec}}</td>
<td class="num" data-v="{{.SenKey}}">{{.Sen}}</td><td class="num">{{.SenCI}}</td>
<td class="num" data-v="{{.MKPKey}}">{{.MKP}}</td><td class="num" data-v="{{.HACPKey}}">{{.HACP}}</td><td class="num" data-v="{{.FDRKey}}">{{.FDR}}</td>
<td>{{range .Flags}}<span class="flag on">{{.Label}}</span>{{end}}{{if .OnTheFly}}<span class="flag">computed now</span>{{end}}</td>
{{range .Meta}}<td>{{.}}</td>{{end}}</tr>
{{end}}</tbody></table></div>
{{if .Groups}}<h2>Slopes by {{.GroupBy}}</h2>
<div class="maps">{{range .Groups}}<figure id="{{.ID}}" data-x-map="{{.XMap}}" data-y-map="{{.YMap}}">{{.SVG}}<figcaption>{{.Caption}}{{if .PNG}} <a href="{{.PNG}}">PNG</a>{{end}}</figcaption></figure>{{end}}</div>{{end}}
{{range .Notes}}<p class="note">{{.}}</p>{{end}}
</main>
<footer>{{.Footer}}</footer>
<script>{{.JS}}</script>
</body></html>
`))

func execute(t *template.Template, data any) ([]byte, error) {
	var b bytes.Buffer
	err := t.Execute(&b, data)
	return b.Bytes(), err
}

// withSortKey formats a value and its sort key.
func withSortKey(v float64) (string, string) { return num(v), sortKey(v) }

// intervalText formats an interval as "[lo, hi]", "—" when either end is
// undefined.
func intervalText(lo, hi float64) string {
	if math.IsNaN(lo) || math.IsNaN(hi) {
		return "—"
	}
	return "[" + num(lo) + ", " + num(hi) + "]"
}
