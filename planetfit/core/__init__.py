"""The first stage, imported by every other: units and constants (from astropy.constants), the one exception
for user mistakes, orbit geometry, eclipse timing, two-planet stability criteria, small statistics and the
names, symbols and units of every reported quantity. Nothing here reads a file or knows the config."""
