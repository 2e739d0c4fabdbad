from django.contrib import admin
from django.contrib.auth import views as auth_views
from django.urls import include, path

from planner import views
from planner.api import api
from planner.background import views as background_views

urlpatterns = [
    path("", views.scenario_list, name="scenario_list"),
    path("scenarios/new/", views.scenario_new, name="scenario_new"),
    path("scenarios/new/<slug:kind>/", views.scenario_new_kind, name="scenario_new_kind"),
    path("scenarios/<int:pk>/", views.scenario_results, name="scenario_results"),
    path("scenarios/<int:pk>/edit/", views.scenario_edit, name="scenario_edit"),
    path("scenarios/<int:pk>/delete/", views.scenario_delete, name="scenario_delete"),
    path("scenarios/<int:pk>/outlook.json", views.scenario_outlook_json, name="scenario_outlook_json"),
    path("scenarios/<int:pk>/cross-check.json", views.scenario_cross_check_json, name="scenario_cross_check_json"),
    path("scenarios/<int:pk>/save-variant/", views.scenario_variant_save, name="scenario_variant_save"),
    path("scenarios/<int:pk>/csv/<slug:table>.csv", views.scenario_csv, name="scenario_csv"),
    path("scenarios/<int:pk>/sharing/", views.scenario_sharing, name="scenario_sharing"),
    path("scenarios/<int:pk>/sharing/<int:share_id>/", views.scenario_share_change, name="scenario_share_change"),
    path("scenarios/<int:pk>/links/", views.scenario_link_create, name="scenario_link_create"),
    path("scenarios/<int:pk>/links/<int:link_id>/revoke/", views.scenario_link_revoke, name="scenario_link_revoke"),
    path("scenarios/<int:pk>/background/status.json", background_views.plan_work_status, name="plan_work_status"),
    path("scenarios/<int:pk>/background/cancel/", background_views.plan_work_cancel, name="plan_work_cancel"),
    path("scenarios/<int:pk>/background/restart/", background_views.plan_work_restart, name="plan_work_restart"),
    path("scenarios/<int:pk>/history/", views.scenario_history, name="scenario_history"),
    path("scenarios/<int:pk>/history/<int:number>/", views.scenario_version, name="scenario_version"),
    path(
        "scenarios/<int:pk>/history/<int:number>/restore/",
        views.scenario_version_restore,
        name="scenario_version_restore",
    ),
    path("compare/", views.scenario_compare, name="scenario_compare"),
    path("compare/<slug:table>.csv", views.scenario_compare_csv, name="scenario_compare_csv"),
    path("view/<slug:token>/", views.link_results, name="link_results"),
    path("view/<slug:token>/csv/<slug:table>.csv", views.link_csv, name="link_csv"),
    path("histories/", include("planner.history.urls")),
    path("repair-logs/", include("planner.repairlog.urls")),
    path("portfolios/", include("planner.portfolio.urls")),
    path("kinds/<slug:kind>/preview.json", views.kind_preview, name="kind_preview"),
    path("accounts/login/", auth_views.LoginView.as_view(redirect_authenticated_user=True), name="login"),
    path("accounts/logout/", auth_views.LogoutView.as_view(), name="logout"),
    path("account/api-tokens/", views.api_tokens, name="api_tokens"),
    path("account/api-tokens/<int:token_id>/revoke/", views.api_token_revoke, name="api_token_revoke"),
    path("api/", api.urls),
    path("admin/", admin.site.urls),
]
