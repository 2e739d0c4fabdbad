"""Database sessions whose lookup statement the ORM writes once per database, not once per request.

Django's database session store (``django.contrib.sessions.backends.db``) builds its lookup, the
session with this key that has not expired, through the ORM on every request: about 0.5 ms of CPU
of a what-if's 9 ms, nearly all of it query building and compiling. The statement is the same every
time; only the key and the time change. This store has the ORM compile that very query once per
database (with placeholder values), then runs the statement with each request's key and time,
adapted by the session model's own fields, as the ORM itself would send them. The same rows are
read; an unknown or expired key loads nothing, as before. Everything else (saving, creating,
deleting, clearing expired sessions, the async methods) is Django's own.

``SESSION_ENGINE = "planner.sessions"``; the table, the encoding and existing sessions are unchanged.
"""

from __future__ import annotations

import datetime

from django.contrib.sessions.backends import db
from django.db import connections, router
from django.utils import timezone

_PLACEHOLDER_TIME = datetime.datetime(2000, 1, 1, tzinfo=datetime.UTC)


class SessionStore(db.SessionStore):
    _statements: dict[str, str] = {}  # database alias -> SQL of the lookup (parameters: key, then time)

    def _get_session_from_db(self):
        model = self.model
        alias = router.db_for_read(model)
        connection = connections[alias]
        key = self.session_key
        now = model._meta.get_field("expire_date").get_db_prep_value(timezone.now(), connection)
        with connection.cursor() as cursor:
            cursor.execute(self._statement(alias), [model._meta.pk.get_db_prep_value(key, connection), now])
            row = cursor.fetchone()
        if row is None:
            self._session_key = None  # as Django's store does for an unknown or expired key
            return None
        return model(session_key=key, session_data=row[0])

    def _statement(self, alias: str) -> str:
        """The lookup Django's store makes (key equal, expiry after now), compiled by the ORM for ``alias``."""
        if alias not in self._statements:
            query = (
                self.model.objects.using(alias)
                .filter(session_key="placeholder")
                .filter(expire_date__gt=_PLACEHOLDER_TIME)
                .values_list("session_data")
            )
            sql, params = query.query.sql_with_params()
            if len(params) != 2 or params[0] != "placeholder":  # the two values filled in, key first
                raise RuntimeError(f"unexpected session lookup parameters: {params!r}")
            self._statements[alias] = sql
        return self._statements[alias]
