"""`python -m planner` runs the phaseplan command line."""

from planner.cli import main

if __name__ == "__main__":
    main()
