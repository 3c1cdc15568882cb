"""``python -m estimator`` runs the command-line interface."""

from estimator.cli import main

if __name__ == "__main__":
    main()
