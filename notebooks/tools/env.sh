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
# Ours holds an empty init.evcxr (setup.sh writes it). evcxr's compilation
# cache (`:cache`) stays off: it keys a compiled crate by its rustc arguments
# with the build folder's path taken out, but some crates' compiled metadata
# still depends on that path (serde_core includes a file its build script
# writes under the build folder), so a build folder that mixed crates from
# the cache with crates it compiled itself failed with E0460 ("found possibly
# newer version of crate `serde_core` which `csv` depends on"); CI saw it.
export EVCXR_CONFIG_DIR="$NB_STATE/evcxr-config"
#
# Build folders that outlive a kernel (EVCXR_TMPDIR), one per kernel running
# at the same time, so a later kernel finds the crate already compiled. Not
# inside the repo, for the reason nbcheck.py gives for its own build folder.
# The "v2" in the name is the layout without the cache: set-up removes this
# checkout's folders of the earlier layout (NB_OLD_BUILD_DIRS), which may hold
# such a mix.
NB_PATH_HASH=$(printf '%s' "$NB_ROOT" | sha256sum | cut -c1-12)
# The checker (nbcheck.py) takes a free one of the same folders, so it starts
# from what set-up compiled.
export NB_BUILD_SLOTS="${TMPDIR:-/tmp}/stratanet-evcxr-v2-$NB_PATH_HASH"
export NB_SLOT_COUNT=8
NB_OLD_BUILD_DIRS=("${TMPDIR:-/tmp}/stratanet-evcxr-$NB_PATH_HASH" "${TMPDIR:-/tmp}/nbcheck-evcxr-$NB_PATH_HASH" "${TMPDIR:-/tmp}/nbcheck-evcxr-v2-$NB_PATH_HASH")
NB_OLD_CACHE="$NB_STATE/cache"
# cargo/rustup/evcxr_jupyter live in CARGO_HOME/bin (default ~/.cargo/bin).
case ":$PATH:" in
  *":${CARGO_HOME:-$HOME/.cargo}/bin:"*) ;;
  *) PATH="${CARGO_HOME:-$HOME/.cargo}/bin:$PATH" ;;
esac
export PATH
export PYTHONNOUSERSITE=1
export PIP_DISABLE_PIP_VERSION_CHECK=1
