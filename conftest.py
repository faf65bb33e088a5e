"""pytest: the repository root on sys.path, so that tests import ``tests.helpers``."""
