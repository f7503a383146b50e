"""``python -m featureaudit``: the same command line as the ``featureaudit`` script."""

from featureaudit.cli import main

if __name__ == "__main__":
    main()
