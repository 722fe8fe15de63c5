"""The interactive shell: type a model statement by statement and ask questions about it.

:func:`run_shell` runs a session. On a terminal it uses prompt_toolkit
(history, completion of statements, commands and names); with piped input it
reads lines without prompts, so scripts and tests can drive it. ``quit`` or
the end of input ends it with exit code 0; an error never ends it.

Layout: ``model_text`` (statements kept by key, the model text they make),
``session`` (one session's state and its input handling), ``commands`` (the
command table and the editing commands), ``questions`` (the commands that ask
the library), ``repl`` (the read loops and completion). Nothing here
evaluates text: statements go to the parser, commands are looked up by name.
"""

from proofkit.shell.repl import run_shell

__all__ = ["run_shell"]
