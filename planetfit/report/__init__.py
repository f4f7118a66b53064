"""Run outputs: summary.json and posterior.csv, the LaTeX table and summary.md, figures and their captions,
report.html, posterior.nc (arviz), ``planetfit export``, the evidence table of ``planetfit compare``; atomic
writes. Reads samples and derived quantities; imports the stages before it only."""
