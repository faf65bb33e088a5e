"""``python -m copperpath ...`` runs the command line."""
import sys

from copperpath.solver.cli import main

sys.exit(main())
