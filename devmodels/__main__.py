"""``python -m devmodels`` runs the command line."""

from devmodels.cli import main

main()
