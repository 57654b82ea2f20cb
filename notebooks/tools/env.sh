# Sourced (not run) by setup.sh, check.sh and self_test.sh: one place for the
# paths and environment of the notebook checker. Everything lives inside the
# repository's target/ folder, so nothing global (~/.local/share/jupyter,
# ~/.config/evcxr, ~/.jupyter) is read or written.
#
# Needs NB_TOOLS set to this folder by the caller.

NB_ROOT=$(cd "$NB_TOOLS/../.." && pwd)
NB_STATE="$NB_ROOT/target/jupyter"          # kernelspec, runtime, config
NB_VENV="$NB_ROOT/target/notebook-venv"     # Python with the Jupyter client
NB_PY="$NB_VENV/bin/python"
NB_KERNEL=rust                              # the name evcxr_jupyter --install uses
NB_EVCXR_VERSION=0.22.0

# Jupyter: kernelspecs are looked up in JUPYTER_PATH first, and the data,
# config and runtime (connection files) folders are our own.
export JUPYTER_PATH="$NB_STATE"
export JUPYTER_DATA_DIR="$NB_STATE"
export JUPYTER_CONFIG_DIR="$NB_STATE/config"
export JUPYTER_RUNTIME_DIR="$NB_STATE/runtime"
export JUPYTER_PLATFORM_DIRS=1
# evcxr: a config folder of our own, so a developer's
# ~/.config/evcxr/init.evcxr (say `:timing` or `:opt 0`) cannot change outputs.
# Ours holds only init.evcxr with `:cache`, which turns on evcxr's
# compilation cache (setup.sh writes it; no effect on outputs).
export EVCXR_CONFIG_DIR="$NB_STATE/evcxr-config"
# evcxr's compilation cache lives in $XDG_CACHE_HOME/evcxr: for our kernels,
# in target/jupyter/cache/evcxr (the kernelspec sets XDG_CACHE_HOME to this).
NB_CACHE_HOME="$NB_STATE/cache"
NB_EVCXR_CACHE="$NB_CACHE_HOME/evcxr"
NB_EVCXR_CACHE_MIB=2048
# Build folders that outlive a kernel (EVCXR_TMPDIR), one per kernel running
# at the same time, so a later kernel finds the crate already compiled. Not
# inside the repo, for the reason nbcheck.py gives for its own build folder.
NB_BUILD_SLOTS="${TMPDIR:-/tmp}/stratanet-evcxr-$(printf '%s' "$NB_ROOT" | sha256sum | cut -c1-12)"
# cargo/rustup/evcxr_jupyter live in CARGO_HOME/bin (default ~/.cargo/bin).
case ":$PATH:" in
  *":${CARGO_HOME:-$HOME/.cargo}/bin:"*) ;;
  *) PATH="${CARGO_HOME:-$HOME/.cargo}/bin:$PATH" ;;
esac
export PATH
export PYTHONNOUSERSITE=1
export PIP_DISABLE_PIP_VERSION_CHECK=1
