from poser.cli import entry

entry()
