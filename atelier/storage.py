"""Private file storage: client photos and rendered documents.

Files live under MEDIA_ROOT (the data folder's ``private`` directory) and
have no public address.  Views that check the login stream them instead.
"""

from django.core.files.storage import FileSystemStorage, storages


class PrivateFileStorage(FileSystemStorage):
    def __init__(self, location=None, **kwargs):
        kwargs["base_url"] = None
        super().__init__(location=location, **kwargs)

    def url(self, name):
        raise ValueError(
            "Private files have no public address; link to the view that serves them after checking the login."
        )


def private_storage():
    return storages["private"]
