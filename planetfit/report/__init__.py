"""Run outputs: summary.json, summary.md, posterior.csv, tables and figures."""
