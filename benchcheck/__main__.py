"""`python -m benchcheck` runs the command line."""

from benchcheck.cli.main import run

if __name__ == "__main__":
    run()
