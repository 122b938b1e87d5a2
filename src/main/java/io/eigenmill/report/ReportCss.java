package io.eigenmill.report;

/**
 * The page's style sheet, inlined in the page. Generic font families only (nothing to download); print rules keep
 * charts and sections whole and print the colours.
 */
final class ReportCss {
  private ReportCss() {}

  static final String CSS = """
      :root { --ink: #1d232b; --muted: #5c6672; --line: #dde1e6; --paper: #ffffff; --page: #f3f4f6;
        --blue: #24589a; --orange: #c4600a; --band: #1e2833; }
      * { box-sizing: border-box; }
      html { -webkit-text-size-adjust: 100%; }
      body { margin: 0; background: var(--page); color: var(--ink);
        font: 14px/1.45 system-ui, sans-serif; }
      .masthead { background: var(--band); color: #fff; padding: 18px 28px 12px; }
      .masthead .brand { font-size: 12px; letter-spacing: .12em; text-transform: uppercase; color: #b7c4d3; }
      .masthead h1 { margin: 2px 0 4px; font-size: 24px; font-weight: 650; overflow-wrap: anywhere; }
      .masthead .sub { color: #cfd8e2; font-size: 13px; overflow-wrap: anywhere; }
      nav.toc { margin-top: 10px; display: flex; flex-wrap: wrap; gap: 4px 16px; font-size: 13px; }
      nav.toc a { color: #e3ebf4; text-decoration: none; border-bottom: 1px dotted #7f93a8; }
      nav.toc a.warn { color: #ffd9b0; }
      main { max-width: 1080px; margin: 0 auto; padding: 18px 20px 36px; }
      section { background: var(--paper); border: 1px solid var(--line); border-radius: 6px;
        padding: 16px 22px 18px; margin: 0 0 16px; break-inside: avoid; page-break-inside: avoid; }
      section h2 { font-size: 18px; margin: 0 0 4px; font-weight: 650; }
      section h3 { font-size: 14.5px; margin: 16px 0 6px; font-weight: 650; }
      p.lead { color: var(--muted); margin: 0 0 12px; max-width: 86ch; }
      .figures { display: flex; flex-wrap: wrap; gap: 10px; margin: 4px 0 14px; }
      .figure-card { flex: 1 1 130px; border: 1px solid var(--line); border-top: 3px solid var(--blue);
        border-radius: 4px; padding: 6px 12px 8px; }
      .figure-card .v { display: block; font-size: 21px; font-weight: 650; font-variant-numeric: tabular-nums; }
      .figure-card .l { display: block; color: var(--muted); font-size: 12px; }
      .groups { display: grid; grid-template-columns: repeat(2, minmax(0, 1fr)); gap: 6px 32px; }
      dl.facts { display: grid; grid-template-columns: minmax(9em, max-content) minmax(0, 1fr); gap: 3px 14px;
        margin: 0; font-size: 13px; }
      dl.facts dt { color: var(--muted); }
      dl.facts dd { margin: 0; overflow-wrap: anywhere; }
      table { border-collapse: collapse; font-size: 13px; font-variant-numeric: tabular-nums; margin: 4px 0 8px; }
      th, td { padding: 3px 10px; border-bottom: 1px solid var(--line); text-align: left; vertical-align: top; }
      th { font-weight: 600; color: var(--muted); border-bottom: 2px solid var(--line); }
      td.num, th.num { text-align: right; white-space: nowrap; }
      td.name { overflow-wrap: break-word; }
      td.key { white-space: nowrap; }
      tr.chosen td { font-weight: 650; background: #eaf0f8; }
      .tablewrap { overflow-x: auto; }
      tr.skipped td { color: var(--muted); }
      td.reason { font-size: 12.5px; font-style: italic; }
      .multiples { display: grid; grid-template-columns: repeat(auto-fill, minmax(236px, 1fr)); gap: 8px 14px;
        margin: 6px 0 4px; }
      .multiples svg.chart { width: 100%; }
      .pooled-curve { fill: none; stroke: #9aa3ad; stroke-width: 1.4; stroke-dasharray: 4 2; }
      .k-label.small { font-size: 10.5px; }
      figure { margin: 10px 0 14px; break-inside: avoid; page-break-inside: avoid; }
      figcaption { color: var(--muted); font-size: 12.5px; margin-top: 4px; max-width: 90ch; }
      .row { display: flex; flex-wrap: wrap; gap: 8px 18px; align-items: flex-start; }
      .row > figure { flex: 1 1 300px; min-width: 0; }
      svg.chart { display: block; max-width: 100%; height: auto;
        font-family: system-ui, sans-serif; }
      svg.swatch { display: inline-block; vertical-align: -2px; margin-right: 5px; }
      .grid { stroke: #e3e6ea; stroke-width: 1; }
      .axis { stroke: #8a939d; stroke-width: 1; }
      .zero-line { stroke: #9aa3ad; stroke-width: 1; stroke-dasharray: 3 3; }
      .tick { font-size: 11px; fill: var(--muted); }
      .axis-title { font-size: 12px; fill: var(--ink); }
      .chart-title { font-size: 12.5px; font-weight: 600; fill: var(--ink); }
      .legend-label, .note-label, .group-label { font-size: 11.5px; fill: var(--ink); }
      .group-label { fill: var(--muted); }
      .row-label { font-size: 12px; fill: var(--ink); }
      .col-label { font-size: 12px; font-weight: 600; fill: var(--ink); }
      .cell-label { font-size: 10.5px; fill: var(--ink); font-variant-numeric: tabular-nums; }
      .cell-label.on-dark { fill: #ffffff; }
      .bar-label { font-size: 11px; fill: var(--ink); font-variant-numeric: tabular-nums; }
      .curve { fill: none; stroke: var(--orange); stroke-width: 2; }
      .target { stroke: var(--ink); stroke-width: 1.2; stroke-dasharray: 7 4; }
      .k-line { stroke: var(--ink); stroke-width: 1.2; stroke-dasharray: 2 3; }
      .k-label { font-size: 12px; font-weight: 650; fill: var(--ink); }
      .group-line { stroke: var(--ink); stroke-width: 1.2; }
      .limit { stroke: var(--orange); stroke-width: 1.6; stroke-dasharray: 8 4; }
      .limit-label { font-size: 11.5px; font-weight: 600; fill: var(--orange);
        paint-order: stroke; stroke: #fff; stroke-width: 3px; stroke-linejoin: round; }
      .pt { fill-opacity: .78; stroke: #1b1b1b; stroke-opacity: .35; stroke-width: .5; }
      .pt-series { fill-opacity: .7; }
      .pt-flagged { stroke: #5a2a00; stroke-width: .6; }
      .sel-line { fill: none; stroke: var(--blue); stroke-width: 1.6; }
      .legend { display: flex; flex-wrap: wrap; gap: 4px 16px; font-size: 12.5px; margin: 2px 0 6px; padding: 0;
        list-style: none; }
      ul.warnings { list-style: none; margin: 0; padding: 0; }
      ul.warnings li { border-left: 5px solid var(--orange); background: #fdf1e4; padding: 8px 12px;
        margin: 0 0 6px; border-radius: 0 4px 4px 0; overflow-wrap: anywhere; }
      ul.warnings li b { color: #8a3f00; margin-right: 6px; }
      #section-warnings { border-color: #e8b98a; }
      .cards { display: grid; grid-template-columns: repeat(auto-fill, minmax(430px, 1fr)); gap: 12px; }
      .card table { width: 100%; }
      .card { border: 1px solid var(--line); border-radius: 5px; padding: 8px 12px; break-inside: avoid; }
      .card h4 { margin: 0 0 4px; font-size: 13.5px; display: flex; align-items: center; }
      .dbar { display: inline-block; height: 9px; vertical-align: 0; border-radius: 1px; }
      .contrib { white-space: nowrap; margin-right: 10px; }
      .note { color: var(--muted); font-size: 12.5px; }
      footer { max-width: 1080px; margin: 0 auto; padding: 0 20px 28px; color: var(--muted); font-size: 12px; }
      @media (max-width: 760px) { .groups { grid-template-columns: 1fr; } }
      @media print {
        @page { size: A4; margin: 12mm; }
        * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
        body { background: #fff; font-size: 11.5px; }
        .masthead { background: #fff; color: var(--ink); border-bottom: 2px solid var(--ink); padding: 0 0 8px; }
        .masthead .brand, .masthead .sub { color: var(--muted); }
        nav.toc { display: none; }
        main { max-width: none; padding: 8px 0; }
        section { border: none; border-radius: 0; padding: 6px 0 10px; margin: 0 0 8px;
          border-top: 1px solid var(--line); }
        figure, svg.chart, table, .card, .figure-card, ul.warnings li { break-inside: avoid; page-break-inside: avoid; }
        h2, h3 { break-after: avoid; page-break-after: avoid; }
        .tablewrap { overflow: visible; }
      }
      """;
}
