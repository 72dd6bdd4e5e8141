"""``python -m variantcmp`` works like the ``variantcmp`` console script."""

import sys

from variantcmp.cli import main

if __name__ == "__main__":
    sys.exit(main())
