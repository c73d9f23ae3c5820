import sys

from tui.cli.main import main

sys.exit(main())
