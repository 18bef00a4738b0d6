"""Type hints of the mixband package."""

import os
from typing import Any, Mapping, Optional, Union

from ._result import Result as Result

__version__: str

def sample(
    values: Any = ...,
    *,
    counts: Any = ...,
    out: Union[None, str, os.PathLike] = ...,
    seed: Optional[int] = ...,
    config: Union[None, str, os.PathLike, Mapping[str, Any]] = ...,
    force: bool = ...,
    threads: Optional[int] = ...,
    report: bool = ...,
    quiet: bool = ...,
    **sections: Mapping[str, Any],
) -> Result: ...
def open(run_dir: Union[str, os.PathLike]) -> Result: ...
