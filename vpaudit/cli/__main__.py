"""``python -m vpaudit.cli``: the command line, as the ``vpaudit`` command (without its fast
exit; :func:`vpaudit.cli.run` has it).
"""

from . import main

main()
