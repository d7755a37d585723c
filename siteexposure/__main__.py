"""``python -m siteexposure`` runs the command line."""

from siteexposure.cli.app import main

if __name__ == "__main__":
    main()
