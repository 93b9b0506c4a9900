package report

import "html/template"

// pageTemplate is the HTML page. Everything it shows is escaped by
// html/template; the SVG plots are built by this package with their text
// escaped (esc) and passed in as template.HTML.
var pageTemplate = template.Must(template.New("page").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>trackgate: {{.Verdict}} — {{.Suite.Tracker.Name}} {{.Suite.Tracker.Version}}</title>
<style>
:root { --ink:#1d2733; --muted:#5d6b79; --line:#d5dce3; --paper:#ffffff; --wash:#f4f6f8;
  --pass:#2e7d4f; --tie:#1b7f94; --skip:#7a8590; --fail:#c0392b; --fault:#8e3fa8; --error:#b7791f; }
* { box-sizing: border-box; }
body { margin:0; font:15px/1.45 system-ui, -apple-system, "Segoe UI", sans-serif; color:var(--ink); background:var(--wash); }
header { background:var(--ink); color:#fff; padding:18px 28px; }
header h1 { margin:0 0 4px; font-size:22px; }
header p { margin:0; color:#c9d3dd; }
main { max-width:1060px; margin:0 auto; padding:18px 20px 40px; }
section { background:var(--paper); border:1px solid var(--line); border-radius:8px; padding:16px 20px; margin:18px 0; }
h2 { margin:0 0 6px; font-size:19px; }
h3 { font-size:15px; margin:14px 0 4px; }
.badge { display:inline-block; min-width:54px; text-align:center; padding:1px 8px; border-radius:10px; color:#fff; font-size:12px; font-weight:600; letter-spacing:.04em; vertical-align:2px; }
.b-pass{background:var(--pass)} .b-tie{background:var(--tie)} .b-skip{background:var(--skip)}
.b-fail{background:var(--fail)} .b-fault{background:var(--fault)} .b-error{background:var(--error)}
table { border-collapse:collapse; width:100%; font-size:14px; }
th, td { text-align:left; padding:5px 8px; border-bottom:1px solid var(--line); }
td.n, th.n { text-align:right; font-variant-numeric: tabular-nums; }
.desc { color:var(--muted); margin:0 0 8px; }
.problem { border-left:4px solid var(--line); padding:4px 12px; margin:10px 0; background:var(--wash); }
.p-fail{border-color:var(--fail)} .p-fault{border-color:var(--fault)} .p-tie{border-color:var(--tie)} .p-error{border-color:var(--error)}
.problem ul { margin:4px 0; padding-left:18px; }
pre { background:#1d2733; color:#e8edf2; padding:8px 10px; border-radius:4px; overflow-x:auto; font-size:12.5px; }
code { font-size:13px; }
.plots svg { display:block; max-width:100%; height:auto; margin:8px 0; }
.note { color:var(--muted); font-size:13px; }
svg text { font:11px system-ui, sans-serif; fill:var(--ink); }
svg .area { fill:#fbfcfd; stroke:#aab5c0; }
svg .grid { stroke:#e3e8ed; stroke-width:1; }
svg .tick { fill:var(--muted); }
svg .axis { font-size:12px; }
svg .legend { font-size:12px; }
svg .label { font-size:11px; fill:#394755; font-weight:600; }
svg .empty { fill:var(--muted); font-size:13px; }
svg .truth { fill:none; stroke:#2f3b47; stroke-width:3; stroke-opacity:.35; stroke-linecap:round; stroke-linejoin:round; }
svg .det { fill:#ffffff; stroke:#7b8794; stroke-width:1; }
svg .ref { fill:none; stroke:#1f63b5; stroke-width:1.6; stroke-dasharray:6 3; }
svg .trk { fill:none; stroke:#e0620d; stroke-width:1.6; }
svg .avg { fill:none; stroke:#55606b; stroke-width:1.4; stroke-dasharray:3 3; }
svg .refell { fill:#1f63b5; fill-opacity:.06; stroke:#1f63b5; stroke-opacity:.35; stroke-width:.8; }
svg .trkell { fill:#e0620d; fill-opacity:.06; stroke:#e0620d; stroke-opacity:.35; stroke-width:.8; }
svg .refbar { stroke:#1f63b5; stroke-opacity:.45; stroke-width:1.2; }
svg .trkbar { stroke:#e0620d; stroke-opacity:.45; stroke-width:1.2; }
svg .diverge { fill:none; stroke:var(--fail); stroke-width:2.5; }
svg .divmark { stroke:var(--fail); stroke-width:1.5; stroke-dasharray:4 2; }
svg .tiemark { stroke:var(--tie); stroke-width:1.5; stroke-dasharray:2 2; }
svg .marktext { fill:var(--fail); font-size:11px; }
svg .divmark2 { fill:var(--fail); }
svg .tiemark2 { fill:var(--tie); }
svg .same { fill:#9fd3b1; }
svg .tiecell { fill:#7cc6d6; }
svg .differs { fill:#e0837a; }
svg .unknown { fill:#d5dce3; }
svg .ospa { fill:none; stroke:#7a3fb0; stroke-width:1.4; }
svg .loc { fill:none; stroke:#1f63b5; stroke-width:1.6; }
svg .miss { fill:none; stroke:#c0392b; stroke-width:1.6; stroke-dasharray:5 2; }
svg .fals { fill:none; stroke:#b7791f; stroke-width:1.6; stroke-dasharray:2 2; }
svg .band { fill:#2e7d4f; fill-opacity:.12; stroke:#2e7d4f; stroke-opacity:.4; }
</style>
</head>
<body>
<header>
<h1>trackgate: <span class="badge b-{{.StatusClass}}">{{.Verdict}}</span> {{.Passed}} of {{.Total}} runs passed</h1>
<p>Tracker {{.Suite.Tracker.Name}} {{.Suite.Tracker.Version}}{{with .Suite.Tracker.Command}} (<code>{{range $i, $a := .}}{{if $i}} {{end}}{{$a}}{{end}}</code>){{end}}, compared against {{.Suite.Against}}; {{.Suite.Tool}} on {{.Platform}}{{with .Shard}}; {{.}}{{end}}.</p>
</header>
<main>
{{range .Suite.Notes}}<p class="note"><strong>Note:</strong> {{.}}</p>
{{end}}<section>
<h2>Scenarios</h2>
<table>
<thead><tr><th>Status</th><th>Scenario</th><th class="n">Runs passed</th><th class="n">Mean GOSPA (m)</th><th class="n">Mean OSPA (m)</th><th>File</th></tr></thead>
<tbody>
{{range .Scenarios}}<tr><td><span class="badge b-{{.StatusClass}}">{{.Word}}</span></td><td><a href="#{{.Anchor}}">{{.Sc.Name}}</a></td><td class="n">{{.Passed}}/{{.Runs}}</td><td class="n">{{.MeanGOSPA}}</td><td class="n">{{.MeanOSPA}}</td><td><code>{{.Sc.File}}</code></td></tr>
{{end}}</tbody>
</table>
</section>
{{range .Scenarios}}<section id="{{.Anchor}}">
<h2><span class="badge b-{{.StatusClass}}">{{.Word}}</span> {{.Sc.Name}}</h2>
<p class="desc">{{.Sc.Description}} <span class="note">({{.Sc.File}}, {{.Passed}} of {{.Runs}} runs passed, mean GOSPA {{.MeanGOSPA}} m)</span></p>
{{range .Problems}}<div class="problem p-{{.StatusClass}}">
<h3>{{.Title}}</h3>
{{with .Lines}}<ul>{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}
{{with .Diffs}}<table>
<thead><tr><th>Value</th><th class="n">Want</th><th class="n">Got</th><th>Tolerance</th><th class="n">Excess</th></tr></thead>
<tbody>{{range .}}<tr><td><code>{{.Path}}</code></td><td class="n">{{.Want}}</td><td class="n">{{.Got}}</td><td>{{.Tolerance}}</td><td class="n">{{.Excess}}</td></tr>{{end}}</tbody>
</table>{{end}}
{{with .DiffNote}}<p class="note">Showing {{.}}.</p>{{end}}
{{with .Stderr}}<pre>{{.}}</pre>{{end}}
</div>
{{end}}{{with .More}}<p class="note">{{.}}</p>
{{end}}<div class="plots">
<p class="note">{{.Shown}}</p>
{{with .Plane}}<h3>Positions</h3>
{{.}}{{end}}
{{with .Timeline}}<h3>Association against the reference</h3>
{{.}}{{end}}
{{with .GOSPA}}<h3>GOSPA and OSPA</h3>
{{.}}{{end}}
{{with .SplitLine}}<p class="note">{{.}}</p>
{{end}}{{with .Split}}<h3>GOSPA split</h3>
{{.}}{{end}}
{{with .Objects}}<h3>Per-object RMSE</h3>
<table>
<thead><tr><th>Object</th><th class="n">RMSE position</th><th class="n">RMSE velocity</th><th class="n">Steps</th></tr></thead>
<tbody>{{range .}}<tr><td>{{.Object}}</td><td class="n">{{.Position}}</td><td class="n">{{.Velocity}}</td><td class="n">{{.Steps}}</td></tr>{{end}}</tbody>
</table>
{{end}}{{with .ObjectsNote}}<p class="note">{{.}}</p>
{{end}}{{with .NEES}}<h3>NEES</h3>
{{.}}{{end}}
{{with .NIS}}<h3>NIS</h3>
{{.}}{{end}}
{{with .NISLine}}<p class="note">{{.}}</p>
{{end}}
</div>
</section>
{{end}}<p class="note">Rendered by trackgate from a result file; this page needs no network access.</p>
</main>
</body>
</html>
`))
