"""Portfolio forms: they parse and check request data; they never write and never compute."""

from __future__ import annotations

from django import forms
from django.contrib.auth import get_user_model

from planner.portfolio.items_file import MAX_BYTES


class UploadForm(forms.Form):
    file = forms.FileField(
        label="Table of items (CSV)",
        help_text=f"One row an item, a header naming the columns listed beside. At most {MAX_BYTES // 2**20} MB.",
        widget=forms.ClearableFileInput(attrs={"accept": ".csv,text/csv"}),
        allow_empty_file=True,  # the reader says so itself
    )
    title = forms.CharField(label="Name of the run", max_length=120)


class ShareForm(forms.Form):
    username = forms.CharField(label="Let this user see the run", max_length=150)

    def clean_username(self):
        user = get_user_model().objects.filter(username=self.cleaned_data["username"]).first()
        if user is None:
            raise forms.ValidationError("No user has that name.")
        return user
