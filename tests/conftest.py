"""Shared pytest hooks: print how many cases the API fuzz tests tried (tests/test_fuzz_api.py)."""

import sys


def pytest_terminal_summary(terminalreporter):
    for name, module in list(sys.modules.items()):
        if name.rsplit(".", 1)[-1] == "test_fuzz_api" and hasattr(module, "fuzz_summary"):
            summary = module.fuzz_summary()
            if summary:
                terminalreporter.write_line(summary)
