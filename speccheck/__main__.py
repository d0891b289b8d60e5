"""``python -m speccheck`` runs the command line."""

from speccheck.cli.main import main

main()
