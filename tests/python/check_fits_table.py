"""Reference check: a fulcrum FITS binary table loads with astropy.table with
its columns, units and values (FITS standard 4.0, sect. 7.3)."""
import sys
import astropy.units as u
from astropy.table import Table

t = Table.read(sys.argv[1], hdu="SAMPLE")
# CFITSIO pads fixed-width strings with blanks (allowed by the standard).
ok = ([s.rstrip() for s in t["name"]] == ["alpha", "beta-two"] and list(t["flux"]) == [1.5, -2.25]
      and list(t["n"]) == [3, 4] and t["flux"].unit == u.Unit("Jy km / s"))
print([repr(x) for x in t["name"]], t["flux"].unit)
print(t)
sys.exit(0 if ok else 1)
