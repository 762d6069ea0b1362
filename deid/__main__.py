"""``python -m deid`` runs the chartveil command line."""

from deid.cli import main

main()
