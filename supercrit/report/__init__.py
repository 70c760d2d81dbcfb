"""The shareable report: one self-contained HTML file per scenario run (plotly embedded once)."""
