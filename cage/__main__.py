"""``python -m cage`` runs the same command-line interface as the ``cage`` script."""
from cage.cli import main

if __name__ == "__main__":
    main()
