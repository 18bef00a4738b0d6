"""Type hints of the native module (python/src/lib.rs)."""

from typing import Any, Callable, Dict, List, Optional, Tuple

__version__: str

def sample(
    config: str,
    config_is_json: bool,
    origin: str,
    base_dir: str,
    values: Optional[List[float]],
    counts: Optional[List[int]],
    out: str,
    force: bool,
    threads: Optional[int] = ...,
    report: bool = ...,
    progress: Optional[Callable[[int, int], Any]] = ...,
) -> Dict[str, Any]: ...
def resume(
    run_dir: str,
    draws: Optional[int] = ...,
    threads: Optional[int] = ...,
    report: bool = ...,
    progress: Optional[Callable[[int, int], Any]] = ...,
) -> Optional[Dict[str, Any]]: ...
def density_draws(run_dir: str) -> Tuple[bytes, int, int, int]: ...
