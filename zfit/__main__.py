"""``python -m zfit`` runs the command line."""

from .cli._app import main

main()
