"""The one-time pairing code of a server on the studio network, and its lock-out of guessers.

``glowtemp serve --lan`` shows a code (and a QR code of the address that carries it); a phone
that sends it back is paired and the code is used up: a new one is made for the next device.
A client address that sends :data:`WRONG_TRIES` wrong codes is locked out for
:data:`LOCKOUT_S`. Many addresses cannot share the guessing either: each printed code takes at
most :data:`CODE_WRONG_TRIES` wrong codes from all addresses together; then it is retired, a new
one is printed, and every address waits :data:`RETIRED_PAUSE_S` before trying again. Guessing
the 8-digit code (10^8 choices) therefore takes years, not minutes, from any number of addresses.
"""

from __future__ import annotations

import hmac
import secrets
import threading
import time

CODE_DIGITS = 8
WRONG_TRIES = 5
LOCKOUT_S = 15 * 60.0
CODE_WRONG_TRIES = 20  # wrong codes from all addresses together before a printed code is retired
RETIRED_PAUSE_S = 60.0  # after that, nobody may try until this has passed


class PairingLocked(Exception):
    """Too many wrong codes; ``retry_after_s`` until trying again. ``everyone`` is True when the
    code itself was retired after wrong codes from many addresses (a new code is printed)."""

    def __init__(self, retry_after_s: float, everyone: bool = False):
        super().__init__(f"locked for {retry_after_s:.0f} s")
        self.retry_after_s = retry_after_s
        self.everyone = everyone


def new_code() -> str:
    """A random code of :data:`CODE_DIGITS` digits from the operating system's generator."""
    return f"{secrets.randbelow(10**CODE_DIGITS):0{CODE_DIGITS}d}"


def shown_code(code: str) -> str:
    """The code in two groups, as people read it out.

    >>> shown_code("12345678")
    '1234-5678'
    """
    half = len(code) // 2
    return f"{code[:half]}-{code[half:]}"


def typed_code(text: str) -> str:
    """What was typed, with spaces, dashes and anything else but digits dropped.

    >>> typed_code(" 1234 - 5678 ")
    '12345678'
    """
    return "".join(ch for ch in str(text) if "0" <= ch <= "9")[: CODE_DIGITS * 2]


class PairingCodes:
    """The current one-time code and the wrong tries per client address, shared by all threads.

    ``on_new_code(code)`` is called whenever a used code is replaced (the server prints it);
    ``clock`` gives seconds (monotonic), replaceable in tests.
    """

    def __init__(self, on_new_code=None, clock=time.monotonic, wrong_tries=WRONG_TRIES, lockout_s=LOCKOUT_S,
                 code_wrong_tries=CODE_WRONG_TRIES, retired_pause_s=RETIRED_PAUSE_S):  # fmt: skip
        self.on_new_code = on_new_code
        self.wrong_tries = wrong_tries
        self.lockout_s = lockout_s
        self.code_wrong_tries = code_wrong_tries
        self.retired_pause_s = retired_pause_s
        self._clock = clock
        self._lock = threading.Lock()
        self._wrong: dict[str, int] = {}
        self._locked_until: dict[str, float] = {}
        self._wrong_for_code = 0
        self._paused_until = -float("inf")
        self.code = new_code()

    def tries_left(self, address: str) -> int:
        with self._lock:
            return self.wrong_tries - self._wrong.get(address, 0)

    def attempt(self, address: str, typed: str) -> bool:
        """Whether ``typed`` is the current code; a right code is used up at once.

        Raises :class:`PairingLocked` while ``address`` is locked out (even for the right code).
        """
        with self._lock:
            now = self._clock()
            if now < self._paused_until:
                raise PairingLocked(self._paused_until - now, everyone=True)
            self._locked_until = {a: t for a, t in self._locked_until.items() if t > now}
            if address in self._locked_until:
                raise PairingLocked(self._locked_until[address] - now)
            right = hmac.compare_digest(typed_code(typed).encode(), self.code.encode())
            if right:
                self._wrong.pop(address, None)
            else:
                self._wrong[address] = self._wrong.get(address, 0) + 1
                if self._wrong[address] >= self.wrong_tries:
                    del self._wrong[address]
                    self._locked_until[address] = now + self.lockout_s
                self._wrong_for_code += 1
                if self._wrong_for_code < self.code_wrong_tries:
                    return False
                self._paused_until = now + self.retired_pause_s
            self._wrong_for_code = 0
            self.code = new_code()
            replaced = self.code
        if self.on_new_code is not None:
            self.on_new_code(replaced)
        return right
