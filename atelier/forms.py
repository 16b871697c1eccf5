from django import forms
from django.contrib.auth.forms import AuthenticationForm

from atelier.roles import role_of


class StaffAuthenticationForm(AuthenticationForm):
    """Sign-in for staff: the account must have a role in the atelier."""

    def confirm_login_allowed(self, user):
        super().confirm_login_allowed(user)
        if role_of(user) is None:
            raise forms.ValidationError(
                "This account has no role in the atelier yet. Ask the owner to make you an owner, fitter or workroom member.",
                code="no_role",
            )
