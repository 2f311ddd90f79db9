"""``python -m meshprops`` runs the command-line tool."""

from .cli.app import main

if __name__ == "__main__":
    main()
