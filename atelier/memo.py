"""A small in-process store of the most recently used values, shared by a worker's threads."""

import threading
from collections import OrderedDict

WAIT_FOR_OTHER_S = 30.0


class Recent:
    """The ``size`` most recently used values, by key.

    Only for values that never go stale under their key (a saved revision,
    a drawing of given inputs).  When two threads ask for the same key at
    once, the second waits for the first one's answer instead of working it
    out again.
    """

    def __init__(self, size):
        self.size = size
        self.items: OrderedDict = OrderedDict()
        self.pending: dict[str, threading.Event] = {}
        self.lock = threading.Lock()

    def get_or_make(self, key, make):
        with self.lock:
            if key in self.items:
                self.items.move_to_end(key)
                return self.items[key]
            waiting = self.pending.get(key)
            if waiting is None:
                self.pending[key] = threading.Event()
        if waiting is not None:
            waiting.wait(WAIT_FOR_OTHER_S)
            with self.lock:
                if key in self.items:
                    return self.items[key]
            return make()  # the other thread failed or took too long
        try:
            value = make()
            with self.lock:
                self.items[key] = value
                while len(self.items) > self.size:
                    self.items.popitem(last=False)
            return value
        finally:
            with self.lock:
                self.pending.pop(key).set()
