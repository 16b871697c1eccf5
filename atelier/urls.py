from django.conf import settings
from django.contrib import admin
from django.contrib.auth import views as auth_views
from django.urls import include, path

from atelier.forms import StaffAuthenticationForm

admin.site.site_header = settings.ATELIER_NAME
admin.site.site_title = settings.ATELIER_NAME
admin.site.index_title = "Records"

urlpatterns = [
    path(
        "login/",
        auth_views.LoginView.as_view(authentication_form=StaffAuthenticationForm, redirect_authenticated_user=True),
        name="login",
    ),
    path("logout/", auth_views.LogoutView.as_view(), name="logout"),
    path("admin/", admin.site.urls),
    path("patterns/", include("patterns.urls")),
    path("", include("fittings.urls")),
]
