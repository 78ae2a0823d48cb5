"""The one-time pairing code of a server on the studio network, and its lock-out of guessers.

``glowtemp serve --lan`` shows a code (and a QR code of the address that carries it); a phone
that sends it back is paired and the code is used up: a new one is made for the next device.
A client address that sends :data:`WRONG_TRIES` wrong codes is locked out for
:data:`LOCKOUT_S`, so guessing the 8-digit code (10^8 choices) takes years, not minutes.
"""

from __future__ import annotations

import hmac
import secrets
import threading
import time

CODE_DIGITS = 8
WRONG_TRIES = 5
LOCKOUT_S = 15 * 60.0


class PairingLocked(Exception):
    """Too many wrong codes from one client address; ``retry_after_s`` until it may try again."""

    def __init__(self, retry_after_s: float):
        super().__init__(f"locked for {retry_after_s:.0f} s")
        self.retry_after_s = retry_after_s


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

    def __init__(self, on_new_code=None, clock=time.monotonic, wrong_tries=WRONG_TRIES, lockout_s=LOCKOUT_S):
        self.on_new_code = on_new_code
        self.wrong_tries = wrong_tries
        self.lockout_s = lockout_s
        self._clock = clock
        self._lock = threading.Lock()
        self._wrong: dict[str, int] = {}
        self._locked_until: dict[str, float] = {}
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
            self._locked_until = {a: t for a, t in self._locked_until.items() if t > now}
            if address in self._locked_until:
                raise PairingLocked(self._locked_until[address] - now)
            if hmac.compare_digest(typed_code(typed).encode(), self.code.encode()):
                self._wrong.pop(address, None)
                self.code = new_code()
                replaced = self.code
            else:
                self._wrong[address] = self._wrong.get(address, 0) + 1
                if self._wrong[address] >= self.wrong_tries:
                    del self._wrong[address]
                    self._locked_until[address] = now + self.lockout_s
                return False
        if self.on_new_code is not None:
            self.on_new_code(replaced)
        return True
