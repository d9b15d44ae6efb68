"""URL map of the load benchmark: the service's own routes plus baselines.

A bare Django view (no authentication, no database), and plain DRF peers of the job list and
job detail: the same queryset joins and serializer, DRF's own token authentication and page
pagination, none of the service's roles, filters or versioning.
"""

from django.http import JsonResponse
from django.urls import path
from rest_framework import generics
from rest_framework.authentication import TokenAuthentication
from rest_framework.pagination import PageNumberPagination
from rest_framework.permissions import IsAuthenticated

from shop.intake.models import Job
from shop.intake.serializers import JobSerializer
from shop.urls import handler404, handler500  # noqa: F401  (the service's JSON error pages)
from shop.urls import urlpatterns as service_urlpatterns

BARE_PATH = "bench/bare/"
PEER_LIST_PATH = "bench/peer/jobs/"


def bare(request):
    """No authentication, no database: the floor every request through the middleware stands on."""
    return JsonResponse({"ok": True})


class PeerPages(PageNumberPagination):
    page_size = 50


class PeerJobs:
    queryset = Job.objects.select_related("unit", "unit__owner", "assigned_technician")
    serializer_class = JobSerializer
    authentication_classes = [TokenAuthentication]
    permission_classes = [IsAuthenticated]


class PeerJobList(PeerJobs, generics.ListAPIView):
    """A plain DRF list; `?state=` filters by one state. Ordered as the service orders jobs."""

    pagination_class = PeerPages

    def get_queryset(self):
        jobs = super().get_queryset().order_by("-received_on", "-id")
        state = self.request.query_params.get("state")
        return jobs.filter(state=state) if state else jobs


class PeerJobDetail(PeerJobs, generics.RetrieveAPIView):
    """A plain DRF detail read."""


urlpatterns = [
    path(BARE_PATH, bare),
    path(PEER_LIST_PATH, PeerJobList.as_view()),
    path(PEER_LIST_PATH + "<int:pk>/", PeerJobDetail.as_view()),
    *service_urlpatterns,
]
