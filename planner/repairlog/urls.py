from django.urls import path

from planner.repairlog import views

urlpatterns = [
    path("new/", views.repairlog_new, name="repairlog_new"),
    path("<int:pk>/", views.repairlog_detail, name="repairlog_detail"),
    path("<int:pk>/plan/<slug:kind>/", views.repairlog_plan_create, name="repairlog_plan_create"),
    path("<int:pk>/csv/<slug:table>.csv", views.repairlog_csv, name="repairlog_csv"),
    path("<int:pk>/delete/", views.repairlog_delete, name="repairlog_delete"),
]
