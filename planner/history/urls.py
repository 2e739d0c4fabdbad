from django.urls import path

from planner.history import views

urlpatterns = [
    path("", views.history_list, name="history_list"),
    path("new/", views.history_new, name="history_new"),
    path("save/", views.history_save, name="history_save"),
    path("<int:pk>/", views.history_detail, name="history_detail"),
    path("<int:pk>/fit/", views.history_fit, name="history_fit"),
    path("<int:pk>/plan/<slug:kind>/", views.history_plan_create, name="history_plan_create"),
    path("<int:pk>/csv/<slug:table>.csv", views.history_csv, name="history_csv"),
    path("<int:pk>/delete/", views.history_delete, name="history_delete"),
]
