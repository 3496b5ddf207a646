"""``python -m portcut``: the same as the ``portcut`` console script."""

import sys

from portcut.app.launcher import main

sys.exit(main())
