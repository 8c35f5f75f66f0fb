"""``python -m zfit`` runs the command line."""

from ._cli import main

main()
