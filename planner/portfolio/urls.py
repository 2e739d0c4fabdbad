from django.urls import path

from planner.portfolio import views

urlpatterns = [
    path("", views.portfolio_list, name="portfolio_list"),
    path("new/", views.portfolio_new, name="portfolio_new"),
    path("<int:pk>/", views.portfolio_detail, name="portfolio_detail"),
    path("<int:pk>/status/", views.portfolio_status, name="portfolio_status"),
    path("<int:pk>/start/", views.portfolio_start, name="portfolio_start"),
    path("<int:pk>/cancel/", views.portfolio_cancel, name="portfolio_cancel"),
    path("<int:pk>/share/", views.portfolio_share, name="portfolio_share"),
    path("<int:pk>/results.csv", views.portfolio_csv, name="portfolio_csv"),
    path("<int:pk>/delete/", views.portfolio_delete, name="portfolio_delete"),
]
