# The list indexes list_benchmark showed missing (README, "List speed"): each list page in
# its own order without sorting the whole table. sample_state_newest_idx serves what
# sample_state_idx did (state first) and the order too.

from django.conf import settings
from django.db import migrations, models


class Migration(migrations.Migration):

    dependencies = [
        ('analyses', '0020_post_release_corrections'),
        migrations.swappable_dependency(settings.AUTH_USER_MODEL),
    ]

    operations = [
        migrations.RemoveIndex(
            model_name='sample',
            name='sample_state_idx',
        ),
        migrations.AddIndex(
            model_name='sample',
            index=models.Index(fields=['-registered_at', '-id'], name='sample_newest_idx'),
        ),
        migrations.AddIndex(
            model_name='sample',
            index=models.Index(fields=['state', '-registered_at', '-id'], name='sample_state_newest_idx'),
        ),
        migrations.AddIndex(
            model_name='test',
            index=models.Index(fields=['priority', 'due_on', 'id'], name='test_order_idx'),
        ),
        migrations.AddIndex(
            model_name='test',
            index=models.Index(fields=['state', 'priority', 'due_on', 'id'], name='test_state_order_idx'),
        ),
    ]
