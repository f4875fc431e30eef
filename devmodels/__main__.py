"""``python -m devmodels`` runs the command line."""

from devmodels.cli import main

if __name__ == "__main__":
    main()
