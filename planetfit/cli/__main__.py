import sys

from planetfit.cli import main

sys.exit(main())
