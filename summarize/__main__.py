"""`python -m summarize` runs the boildown command line."""

from summarize.cli import main

if __name__ == "__main__":
    main()
