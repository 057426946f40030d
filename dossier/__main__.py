import sys

from dossier.cli import main

sys.exit(main())
