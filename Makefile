# Poser — two commands on a fresh Debian/Ubuntu machine:
#   make run    set up .venv and open the posing window on the default demo arm
#   make test   set up .venv with the test extra, run ruff and the whole pytest suite
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed
XVFB   := xvfb-run -a -s "-screen 0 1600x1000x24 +extension GLX +render"

.PHONY: run test sysdeps venv lint bench snapshot clean

sysdeps:
	@bash tools/sysdeps.sh

$(STAMP): pyproject.toml
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install -q --upgrade pip
	$(PY) -m pip install -q -e '.[test]'
	@touch $(STAMP)

venv: $(STAMP)

run: sysdeps venv
	@if [ -n "$$DISPLAY$$WAYLAND_DISPLAY" ]; then \
		$(VENV)/bin/poser $(ARM); \
	else \
		echo "make run: no display here (DISPLAY is not set); rendering the window to poser-window.png instead"; \
		$(XVFB) $(VENV)/bin/poser $(ARM) --snapshot poser-window.png && echo "make run: wrote poser-window.png"; \
	fi

lint: venv
	$(VENV)/bin/ruff check poser tests benchmarks

test: sysdeps venv lint
	$(PY) -m pytest -q

bench: venv
	$(PY) benchmarks/run.py

snapshot: sysdeps venv
	$(XVFB) $(VENV)/bin/poser $(ARM) --snapshot poser-window.png

clean:
	rm -rf $(VENV) .pytest_cache .ruff_cache build *.egg-info
